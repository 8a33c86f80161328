import { asc, eq, sql } from 'drizzle-orm';
import type { Executor } from '../db/client';
import { auditEvent, batchDisposition, cycleRun, reviewMark, signature, type BatchDisposition, type ReviewMark } from '../db/schema';
import { loadBatchRecords, type BatchRecords } from '../batches/query';
import { computeReviewItems, reviewStateOf, type ReviewAuditEvent, type ReviewCycleRun, type ReviewItem, type ReviewState } from '$lib/domain/review';
import { computeProgress } from '$lib/domain/batch/progress';
import type { DispositionDecision, DispositionFacts } from '$lib/domain/disposition';
import type { SignatureFacts } from '$lib/domain/signature';

/** Everything the review of one batch reads, in one go (inside or outside a unit of work). */
export interface ReviewRecords {
	records: BatchRecords;
	runs: ReviewCycleRun[];
	events: ReviewAuditEvent[];
	marks: ReviewMark[];
	disposition: BatchDisposition | null;
}

export async function loadReviewRecords(db: Executor, batchId: string, options: { lock?: boolean } = {}): Promise<ReviewRecords | null> {
	const records = await loadBatchRecords(db, batchId, options);
	if (!records) return null;
	// One query at a time: on a PostgreSQL transaction they share one connection.
	const runRows = await db
		.select({ id: cycleRun.id, stepKey: cycleRun.stepKey, fileName: cycleRun.fileName, fileSha256: cycleRun.fileSha256, analysis: cycleRun.analysis })
		.from(cycleRun)
		.where(eq(cycleRun.batchId, batchId))
		.orderBy(asc(cycleRun.uploadedAt));
	const eventRows = await db
		.select({
			seq: auditEvent.seq,
			hash: auditEvent.hash,
			at: auditEvent.at,
			actorName: auditEvent.actorName,
			action: auditEvent.action,
			entityType: auditEvent.entityType,
			entityId: auditEvent.entityId,
			reason: auditEvent.reason,
			meaning: sql<string | null>`${auditEvent.after} ->> 'meaning'`
		})
		.from(auditEvent)
		.where(eq(auditEvent.batchId, batchId))
		.orderBy(asc(auditEvent.seq));
	const marks = await db.select().from(reviewMark).where(eq(reviewMark.batchId, batchId)).orderBy(asc(reviewMark.markedAt));
	const [disposition] = await db.select().from(batchDisposition).where(eq(batchDisposition.batchId, batchId));
	const runs = runRows.map((r) => ({ id: r.id, stepKey: r.stepKey, fileName: r.fileName, fileSha256: r.fileSha256, excursions: ((r.analysis as { excursions?: ReviewCycleRun['excursions'] } | null)?.excursions ?? []).slice() }));
	return { records, runs, events: eventRows.map((e) => ({ ...e, seq: Number(e.seq) })), marks, disposition: disposition ?? null };
}

export function reviewItemsOf(r: ReviewRecords): ReviewItem[] {
	const { records } = r;
	return computeReviewItems({ template: records.template, entries: records.entries, verifications: records.verifications, deviations: records.deviations, runs: r.runs, events: r.events });
}

/** The facts the disposition gate judges, for one signer and decision. */
export function dispositionFactsOf(r: ReviewRecords, items: readonly ReviewItem[], signer: { id: string; roles: readonly string[] }, decision: DispositionDecision, comment: string | null | undefined): DispositionFacts {
	const { records } = r;
	const progress = computeProgress(records.template, { entries: records.entries, verifications: records.verifications, deviations: records.deviations });
	const labelOf = new Map(progress.steps.map((s) => [s.key, s.label]));
	const entryStep = new Map(records.entries.map((e) => [e.id, e.stepKey]));
	return {
		decision,
		batchStatus: records.batch.status,
		openDeviations: records.deviations.filter((d) => !['closed', 'cancelled'].includes(d.status)).map((d) => ({ number: d.number, status: d.status })),
		unsignedSteps: items.filter((i) => i.kind === 'unsigned-step').map((i) => i.stepLabel ?? i.key),
		unverifiedSteps: items.filter((i) => i.kind === 'unverified-step').map((i) => i.stepLabel ?? i.key),
		unreviewedItems: items.filter((i) => i.markable && reviewStateOf(i, r.marks) !== 'reviewed').map((i) => i.key),
		signer,
		performers: records.entries.map((e) => ({ userId: e.performedBy, stepLabel: labelOf.get(e.stepKey) ?? e.stepKey })),
		verifiers: records.verifications.map((v) => ({ userId: v.verifiedBy, stepLabel: labelOf.get(entryStep.get(v.entryId) ?? v.stepKey) ?? v.stepKey })),
		comment
	};
}

export interface ReviewItemView extends ReviewItem {
	state: ReviewState;
	/** The latest mark of this item (for its current or an earlier hash), if any. */
	lastMark: { markedByName: string; markedAt: string; comment: string | null; current: boolean } | null;
}

export function itemViewsOf(items: readonly ReviewItem[], marks: readonly ReviewMark[]): ReviewItemView[] {
	return items.map((i) => {
		const mine = marks.filter((m) => m.itemKey === i.key);
		const last = mine.find((m) => m.itemHash === i.hash) ?? mine.at(-1);
		return { ...i, state: reviewStateOf(i, marks), lastMark: last ? { markedByName: last.markedByName, markedAt: last.markedAt, comment: last.comment, current: last.itemHash === i.hash } : null };
	});
}

/** The disposition signature's manifestation (11.50), for the page and the PDF. */
export async function dispositionSignature(db: Executor, d: BatchDisposition | null): Promise<SignatureFacts | null> {
	if (!d) return null;
	const [s] = await db.select().from(signature).where(eq(signature.id, d.signatureId));
	return s ? { printedName: s.printedName, meaning: s.meaning, at: s.at, timeZone: s.timeZone, method: s.method } : null;
}
