import { asc, desc, eq, inArray } from 'drizzle-orm';
import type { Executor } from '../db/client';
import { attachment, batch, deviation, masterRecord, reasonCode, signature, stepEntry, stepVerification, user, type Batch } from '../db/schema';
import { batchIssueSignatureContent, isBoundTo, stepEntrySignatureContent, stepVerificationSignatureContent } from './signed-content';
import type { Field, Template } from '$lib/schemas/template';
import { computeProgress, type StepState } from '$lib/domain/batch/progress';
import type { StoredValue } from '$lib/domain/batch/values';
import type { SignatureFacts } from '$lib/domain/signature';
import { renderInstructions } from '$lib/domain/markdown';
import type { ScaledTemplate } from '$lib/domain/template';

/** Everything recorded against one batch, as read in one go (inside or outside a unit of work). */
export interface BatchRecords {
	batch: Batch;
	template: Template;
	entries: (typeof stepEntry.$inferSelect)[];
	verifications: (typeof stepVerification.$inferSelect)[];
	deviations: (typeof deviation.$inferSelect)[];
	attachments: (typeof attachment.$inferSelect)[];
}

export async function loadBatchRecords(db: Executor, batchId: string, options: { lock?: boolean } = {}): Promise<BatchRecords | null> {
	const query = db.select().from(batch).where(eq(batch.id, batchId));
	// The row lock serialises writers of one batch on PostgreSQL (PGlite has one connection anyway).
	const [row] = options.lock ? await query.for('update') : await query;
	if (!row) return null;
	// One query at a time: on a PostgreSQL transaction they share one connection.
	const entries = await db.select().from(stepEntry).where(eq(stepEntry.batchId, batchId)).orderBy(asc(stepEntry.recordedAt));
	const verifications = await db.select().from(stepVerification).where(eq(stepVerification.batchId, batchId));
	const deviations = await db.select().from(deviation).where(eq(deviation.batchId, batchId)).orderBy(asc(deviation.createdAt));
	const attachments = await db.select().from(attachment).where(eq(attachment.batchId, batchId)).orderBy(asc(attachment.uploadedAt));
	return { batch: row, template: row.snapshot as Template, entries, verifications, deviations, attachments };
}

/** The values in force across the batch: each step's current entry (superseded ones left out). */
export function currentValues(records: BatchRecords, exceptStep?: string): Map<string, StoredValue> {
	const superseded = new Set(records.entries.map((e) => e.supersedes).filter((s): s is string => s !== null));
	const out = new Map<string, StoredValue>();
	for (const e of records.entries) {
		if (superseded.has(e.id) || e.stepKey === exceptStep) continue;
		for (const [k, v] of Object.entries(e.values as Record<string, StoredValue>)) out.set(k, v);
	}
	return out;
}

export function progressOf(records: BatchRecords) {
	return computeProgress(records.template, {
		entries: records.entries,
		verifications: records.verifications,
		deviations: records.deviations,
		attachmentSteps: new Set(records.attachments.map((a) => a.stepKey))
	});
}

export interface EntryView {
	id: string;
	values: Record<string, StoredValue>;
	calculations: Record<string, unknown>;
	outOfLimits: string[];
	comment: string | null;
	reasonCode: string | null;
	reasonLabel: string | null;
	supersedes: string | null;
	supersededBy: string | null;
	workedAt: string;
	recordedAt: string;
	late: boolean;
	performedBy: string;
	performedByName: string;
	signature: SignatureFacts | null;
	/** Whether the "performed" signature's hash is still that of the entry rebuilt now (11.70; 11.10(a)). */
	signatureBound: boolean;
}
export interface VerificationView {
	entryId: string;
	verifiedBy: string;
	verifiedByName: string;
	verifiedAt: string;
	signature: SignatureFacts | null;
	/** Whether the "verified" signature still binds the entry and its "performed" signature (11.70). */
	signatureBound: boolean;
}
export interface DeviationView {
	id: string;
	number: string;
	stepKey: string | null;
	/** the step entry that raised it (an out-of-limit value), or null */
	entryId: string | null;
	/** the cycle run that raised it (a freeze-drying excursion), or null */
	runId: string | null;
	kind: string;
	title: string;
	description: string;
	status: string;
	createdAt: string;
	createdByName: string;
}
export interface AttachmentView {
	id: string;
	stepKey: string;
	fieldKey: string | null;
	filename: string;
	contentType: string;
	size: number;
	sha256: string;
	uploadedByName: string;
	uploadedAt: string;
}
export interface StepView {
	key: string;
	label: string;
	title: string;
	instructionsHtml: string;
	roles: string[];
	critical: boolean;
	mayRunOutOfOrder: boolean;
	state: StepState;
	waitingFor: string[];
	equipment: { equipmentClass: string; purpose?: string }[];
	materials: { itemCode: string; name: string; quantity: { value: number; unit: string } | null }[];
	fields: Field[];
	current: EntryView | null;
	history: EntryView[];
	verification: VerificationView | null;
	deviations: DeviationView[];
	attachments: AttachmentView[];
}
export interface BatchView {
	id: string;
	number: string;
	status: Batch['status'];
	version: number;
	masterRecordId: string;
	product: string;
	productCode: string;
	strength: string;
	batchSize: { value: number; unit: string };
	issuedAt: string;
	issuedByName: string | null;
	snapshotHash: string;
	/** The "issued" signature and whether it still binds the batch's number, master, snapshot and size. */
	issueSignature: SignatureFacts | null;
	issueSignatureBound: boolean;
	/** How many signatures on this record no longer match what they sign: each one is flagged where shown. */
	unboundSignatures: number;
	progress: { done: number; total: number; percent: number; next: string | null; complete: boolean };
	sections: { key: string; title: string; steps: StepView[] }[];
	deviations: DeviationView[];
}

function signatureFacts(row: typeof signature.$inferSelect | undefined): SignatureFacts | null {
	return row ? { printedName: row.printedName, meaning: row.meaning, at: row.at, timeZone: row.timeZone, method: row.method } : null;
}

function deviationView(d: BatchRecords['deviations'][number]): DeviationView {
	return { id: d.id, number: d.number, stepKey: d.stepKey, entryId: d.entryId, runId: d.runId, kind: d.kind, title: d.title, description: d.description, status: d.status, createdAt: d.createdAt, createdByName: d.createdByName };
}

/** The whole record as the batch page and GET /api/batches/<id> show it (11.50: every signature manifested). */
export async function buildBatchView(db: Executor, records: BatchRecords): Promise<BatchView> {
	const { batch: b, template } = records;
	// One query at a time: on a PostgreSQL transaction they share one connection.
	const signatures = await db.select().from(signature).where(eq(signature.batchId, b.id));
	const reasons = await db.select({ code: reasonCode.code, label: reasonCode.label }).from(reasonCode);
	const issuer = b.issuedBy ? await db.select({ name: user.name }).from(user).where(eq(user.id, b.issuedBy)) : [];
	const [master] = await db.select({ code: masterRecord.code, version: masterRecord.version }).from(masterRecord).where(eq(masterRecord.id, b.masterRecordId));
	const sigById = new Map(signatures.map((s) => [s.id, s]));
	const reasonLabel = new Map(reasons.map((r) => [r.code, r.label]));
	const supersededBy = new Map(records.entries.filter((e) => e.supersedes).map((e) => [e.supersedes as string, e.id]));
	const entryView = (e: BatchRecords['entries'][number]): EntryView => ({
		id: e.id,
		values: e.values as Record<string, StoredValue>,
		calculations: e.calculations as Record<string, unknown>,
		outOfLimits: e.outOfLimits,
		comment: e.comment,
		reasonCode: e.reasonCode,
		reasonLabel: e.reasonCode ? (reasonLabel.get(e.reasonCode) ?? e.reasonCode) : null,
		supersedes: e.supersedes,
		supersededBy: supersededBy.get(e.id) ?? null,
		workedAt: e.workedAt,
		recordedAt: e.recordedAt,
		late: e.late,
		performedBy: e.performedBy,
		performedByName: e.performedByName,
		signature: signatureFacts(sigById.get(e.signatureId)),
		signatureBound: isBoundTo(sigById.get(e.signatureId), { entityType: 'step-entry', entityId: e.id, meaning: 'performed' }, stepEntrySignatureContent(e, b))
	});
	const entryById = new Map(records.entries.map((e) => [e.id, e]));
	const verificationBound = (v: BatchRecords['verifications'][number]): boolean => {
		const entry = entryById.get(v.entryId);
		const performed = entry ? sigById.get(entry.signatureId) : undefined;
		if (!entry || !performed) return false;
		return isBoundTo(sigById.get(v.signatureId), { entityType: 'step-verification', entityId: v.id, meaning: 'verified' }, stepVerificationSignatureContent(entry, performed, b));
	};
	const issueSig = signatures.find((s) => s.entityType === 'batch' && s.entityId === b.id && s.meaning === 'issued');
	const issueSignatureBound = master ? isBoundTo(issueSig, { entityType: 'batch', entityId: b.id, meaning: 'issued' }, batchIssueSignatureContent(b, master)) : false;
	const progress = progressOf(records);
	const scaled = b.scaled as ScaledTemplate | null;
	const byKey = new Map(progress.steps.map((s) => [s.key, s]));
	const sections = template.sections.map((s) => ({
		key: s.key,
		title: s.title,
		steps: s.steps.map((st): StepView => {
			const p = byKey.get(st.key)!;
			const v = p.verification;
			return {
				key: st.key,
				label: p.label,
				title: st.title,
				instructionsHtml: renderInstructions(st.instructions),
				roles: [...st.roles],
				critical: st.critical,
				mayRunOutOfOrder: st.mayRunOutOfOrder,
				state: p.state,
				waitingFor: p.waitingFor,
				equipment: st.equipment,
				materials: st.materials.map((m) => ({
					itemCode: m.itemCode,
					name: m.name,
					quantity: scaled?.materials.find((x) => x.stepKey === st.key && x.itemCode === m.itemCode)?.quantity ?? null
				})),
				fields: st.fields,
				current: p.current ? entryView(p.current) : null,
				history: p.history.map(entryView),
				verification: v
					? { entryId: v.entryId, verifiedBy: v.verifiedBy, verifiedByName: v.verifiedByName, verifiedAt: v.verifiedAt, signature: signatureFacts(sigById.get(v.signatureId)), signatureBound: verificationBound(v) }
					: null,
				deviations: records.deviations.filter((d) => d.stepKey === st.key).map(deviationView),
				attachments: records.attachments
					.filter((a) => a.stepKey === st.key)
					.map((a) => ({ id: a.id, stepKey: a.stepKey, fieldKey: a.fieldKey, filename: a.filename, contentType: a.contentType, size: a.size, sha256: a.sha256, uploadedByName: a.uploadedByName, uploadedAt: a.uploadedAt }))
			};
		})
	}));
	const stepViews = sections.flatMap((s) => s.steps);
	const unboundSignatures =
		stepViews.reduce((n, st) => n + st.history.filter((e) => !e.signatureBound).length + (st.verification && !st.verification.signatureBound ? 1 : 0), 0) + (issueSig && !issueSignatureBound ? 1 : 0);
	return {
		id: b.id,
		number: b.number,
		status: b.status,
		version: b.version,
		masterRecordId: b.masterRecordId,
		product: template.header.productName,
		productCode: template.header.productCode,
		strength: template.header.strength,
		batchSize: { value: b.batchSize, unit: b.batchSizeUnit },
		issuedAt: b.issuedAt.toISOString(),
		issuedByName: issuer[0]?.name ?? null,
		snapshotHash: b.snapshotHash,
		issueSignature: signatureFacts(issueSig),
		issueSignatureBound,
		unboundSignatures,
		progress: { done: progress.done, total: progress.total, percent: progress.percent, next: progress.next, complete: progress.complete },
		sections,
		deviations: records.deviations.map(deviationView)
	};
}

export interface BatchSummary {
	id: string;
	number: string;
	product: string;
	productCode: string;
	status: Batch['status'];
	version: number;
	issuedAt: string;
	progress: { done: number; total: number; percent: number };
	openDeviations: number;
}

/** Every batch, newest first, with its progress (GET /api/batches, the batch list). */
export async function listBatches(db: Executor): Promise<BatchSummary[]> {
	// Newest first; batches issued in one transaction share issued_at, so the number breaks the tie.
	const rows = await db.select().from(batch).orderBy(desc(batch.issuedAt), desc(batch.number));
	if (rows.length === 0) return [];
	const ids = rows.map((r) => r.id);
	// One query at a time: on a PostgreSQL transaction they share one connection.
	const entries = await db.select({ id: stepEntry.id, batchId: stepEntry.batchId, stepKey: stepEntry.stepKey, supersedes: stepEntry.supersedes, performedBy: stepEntry.performedBy, recordedAt: stepEntry.recordedAt, outOfLimits: stepEntry.outOfLimits }).from(stepEntry).where(inArray(stepEntry.batchId, ids));
	const verifications = await db.select({ entryId: stepVerification.entryId, verifiedBy: stepVerification.verifiedBy, batchId: stepVerification.batchId }).from(stepVerification).where(inArray(stepVerification.batchId, ids));
	const deviations = await db.select({ batchId: deviation.batchId, stepKey: deviation.stepKey, status: deviation.status }).from(deviation).where(inArray(deviation.batchId, ids));
	return rows.map((b) => {
		const template = b.snapshot as Template;
		const p = computeProgress(template, {
			entries: entries.filter((e) => e.batchId === b.id),
			verifications: verifications.filter((v) => v.batchId === b.id),
			deviations: deviations.filter((d) => d.batchId === b.id)
		});
		return {
			id: b.id,
			number: b.number,
			product: template.header.productName,
			productCode: template.header.productCode,
			status: b.status,
			version: b.version,
			issuedAt: b.issuedAt.toISOString(),
			progress: { done: p.done, total: p.total, percent: p.percent },
			openDeviations: deviations.filter((d) => d.batchId === b.id && !['closed', 'cancelled'].includes(d.status)).length
		};
	});
}

