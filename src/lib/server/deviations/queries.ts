import { and, asc, count, desc, eq, ilike, inArray, isNull, notInArray, or, type SQL } from 'drizzle-orm';
import { auditEvent, batch, deviation, signature, type Deviation, type Signature } from '../db/schema';
import { listInvestigators, type DeviationClassification, type DeviationStatus } from '$lib/domain/deviation-lifecycle';
import type { Executor } from '../db/client';

/** Statuses that no longer hold a batch back: the deviation is finished (closed) or withdrawn (cancelled). */
export const finishedDeviationStatuses = ['closed', 'cancelled'] as const;

export interface OpenDeviation {
	id: string;
	number: string;
	status: string;
}

/**
 * The deviations of a batch that are not closed or cancelled, oldest first. The release gate uses
 * it: a batch is not released while a deviation is unresolved (21 CFR 211.192: unexplained
 * discrepancies are investigated before release). Pass the transaction of the disposition so the
 * check and the release see the same data.
 */
export async function openDeviationsOf(tx: Executor, batchId: string): Promise<OpenDeviation[]> {
	return tx
		.select({ id: deviation.id, number: deviation.number, status: deviation.status })
		.from(deviation)
		.where(and(eq(deviation.batchId, batchId), notInArray(deviation.status, [...finishedDeviationStatuses])))
		.orderBy(asc(deviation.createdAt), asc(deviation.number));
}

export interface DeviationFilters {
	status?: DeviationStatus | 'unfinished' | null;
	classification?: DeviationClassification | 'unclassified' | null;
	batchId?: string | null;
	kind?: string | null;
	/** Words in the number, title or description (case-insensitive). */
	text?: string | null;
	limit?: number;
	offset?: number;
}

export interface DeviationListItem {
	id: string;
	number: string;
	title: string;
	status: DeviationStatus;
	classification: DeviationClassification | null;
	kind: string;
	source: string;
	batchId: string | null;
	batchNumber: string | null;
	stepKey: string | null;
	createdAt: string;
	createdByName: string;
	version: number;
}

/** LIKE pattern with the wildcards in the person's words taken literally. */
function containsPattern(text: string): string {
	return `%${text.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
}

/** The deviation list with its filters, newest first; `total` counts every match (for paging). */
export async function listDeviations(db: Executor, f: DeviationFilters = {}): Promise<{ items: DeviationListItem[]; total: number }> {
	const where: SQL[] = [];
	if (f.status === 'unfinished') where.push(notInArray(deviation.status, [...finishedDeviationStatuses]));
	else if (f.status) where.push(eq(deviation.status, f.status));
	if (f.classification === 'unclassified') where.push(isNull(deviation.classification));
	else if (f.classification) where.push(eq(deviation.classification, f.classification));
	if (f.batchId) where.push(eq(deviation.batchId, f.batchId));
	if (f.kind) where.push(eq(deviation.kind, f.kind));
	const text = f.text?.trim();
	if (text) {
		const p = containsPattern(text);
		where.push(or(ilike(deviation.number, p), ilike(deviation.title, p), ilike(deviation.description, p))!);
	}
	const condition = where.length ? and(...where) : undefined;
	const items = await db
		.select({
			id: deviation.id,
			number: deviation.number,
			title: deviation.title,
			status: deviation.status,
			classification: deviation.classification,
			kind: deviation.kind,
			source: deviation.source,
			batchId: deviation.batchId,
			batchNumber: batch.number,
			stepKey: deviation.stepKey,
			createdAt: deviation.createdAt,
			createdByName: deviation.createdByName,
			version: deviation.version
		})
		.from(deviation)
		.leftJoin(batch, eq(batch.id, deviation.batchId))
		.where(condition)
		.orderBy(desc(deviation.createdAt), desc(deviation.number))
		.limit(Math.min(Math.max(f.limit ?? 50, 1), 200))
		.offset(Math.max(f.offset ?? 0, 0));
	const [{ n }] = await db.select({ n: count() }).from(deviation).where(condition);
	return { items, total: Number(n) };
}

/** The kinds present, for the filter's choices (out-of-limit, cycle-excursion, manual, …). */
export async function listDeviationKinds(db: Executor): Promise<string[]> {
	const rows = await db.selectDistinct({ kind: deviation.kind }).from(deviation).orderBy(asc(deviation.kind));
	return rows.map((r) => r.kind);
}

export interface DeviationHistoryEvent {
	seq: number;
	at: string;
	actorName: string;
	action: string;
	before: unknown;
	after: unknown;
	reason: string | null;
}

export interface DeviationDetail extends Deviation {
	batchNumber: string | null;
	batchStatus: string | null;
	/** The deviation's own audit events, oldest first (11.10(e)). */
	events: DeviationHistoryEvent[];
	/** Its signatures, oldest first (11.50: manifestations shown with the record). */
	signatures: Signature[];
	/** The ids of everyone who wrote or submitted its investigation (they may not approve its closure). */
	investigators: string[];
}

/** One deviation with its history: its audit events and its signatures. */
export async function getDeviation(db: Executor, id: string): Promise<DeviationDetail | null> {
	const [row] = await db
		.select({ d: deviation, batchNumber: batch.number, batchStatus: batch.status })
		.from(deviation)
		.leftJoin(batch, eq(batch.id, deviation.batchId))
		.where(eq(deviation.id, id));
	if (!row) return null;
	const rows = await db
		.select({ seq: auditEvent.seq, at: auditEvent.at, actorId: auditEvent.actorId, actorName: auditEvent.actorName, action: auditEvent.action, before: auditEvent.before, after: auditEvent.after, reason: auditEvent.reason })
		.from(auditEvent)
		.where(and(eq(auditEvent.entityType, 'deviation'), eq(auditEvent.entityId, id)))
		.orderBy(asc(auditEvent.seq));
	// The history shows names, not account ids; the ids only decide who investigated.
	const events: DeviationHistoryEvent[] = rows.map(({ actorId: _actorId, ...e }) => e);
	const signatures = await db
		.select()
		.from(signature)
		.where(and(eq(signature.entityType, 'deviation'), eq(signature.entityId, id)))
		.orderBy(asc(signature.at), asc(signature.auditSeq));
	return { ...row.d, batchNumber: row.batchNumber, batchStatus: row.batchStatus, events, signatures, investigators: listInvestigators(rows) };
}

/** Who took part in a deviation's investigation, read from its audit events (listInvestigators). */
export async function investigatorsOf(db: Executor, id: string): Promise<string[]> {
	const events = await db
		.select({ actorId: auditEvent.actorId, action: auditEvent.action, after: auditEvent.after })
		.from(auditEvent)
		.where(and(eq(auditEvent.entityType, 'deviation'), eq(auditEvent.entityId, id), inArray(auditEvent.action, ['deviation.raise', 'deviation.submit', 'deviation.edit'])));
	return listInvestigators(events);
}
