/**
 * Review by exception (21 CFR 211.192: production records are reviewed before release; FDA,
 * "Data Integrity and Compliance With Drug CGMP", Q&A, 2018, Q7: reviewers review the audit
 * trail of critical data). From a batch's records this computes only what needs a human: values
 * out of limits, corrections with their old values and reasons, late entries, deviations, cycle
 * excursions, steps still unsigned or unverified, and one item covering the audit trail of the
 * batch's critical data. Pure and isomorphic: the server and the page compute the same list.
 *
 * Each item has a stable `key` (what it is about) and a `hash` (SHA-256 of the RFC 8785 canonical
 * JSON of what QA looked at). A review mark stores both; an item counts as reviewed only while the
 * stored hash equals the current one, so new data after the mark (a correction, a new event in
 * the trail) makes it need review again.
 */
import { canonicalJson } from './canonical';
import { sha256Hex } from './sha256';
import { chainOf, orderedSteps } from './batch/progress';
import type { Template } from '$lib/schemas/template';

export const reviewItemKinds = ['out-of-limit', 'correction', 'late-entry', 'deviation', 'excursion', 'unsigned-step', 'unverified-step', 'audit-trail'] as const;
export type ReviewItemKind = (typeof reviewItemKinds)[number];

export interface ReviewEntry {
	id: string;
	stepKey: string;
	values: unknown;
	outOfLimits: readonly string[];
	comment: string | null;
	reasonCode: string | null;
	supersedes: string | null;
	workedAt: string;
	recordedAt: string;
	late: boolean;
	performedBy: string;
	performedByName: string;
}
export interface ReviewVerification {
	entryId: string;
	verifiedBy: string;
	verifiedByName: string;
	verifiedAt: string;
}
export interface ReviewDeviation {
	id: string;
	number: string;
	stepKey: string | null;
	entryId: string | null;
	runId: string | null;
	kind: string;
	title: string;
	description: string;
	status: string;
}
export interface ReviewExcursion {
	channel: string;
	kind: string;
	startS: number;
	endS: number;
	durationS: number;
	peak: number;
}
export interface ReviewCycleRun {
	id: string;
	stepKey: string | null;
	fileName: string;
	fileSha256: string;
	excursions: readonly ReviewExcursion[];
}
export interface ReviewAuditEvent {
	seq: number;
	hash: string;
	at: string;
	actorName: string;
	action: string;
	entityType: string;
	entityId: string | null;
	reason: string | null;
	/** For signature events: the meaning signed. */
	meaning?: string | null;
}

export interface ReviewInput {
	template: Template;
	entries: readonly ReviewEntry[];
	verifications: readonly ReviewVerification[];
	deviations: readonly ReviewDeviation[];
	runs: readonly ReviewCycleRun[];
	/** The batch's audit events; only those of critical data (isCriticalDataEvent) are kept. */
	events: readonly ReviewAuditEvent[];
}

export interface ReviewItem {
	key: string;
	kind: ReviewItemKind;
	/** SHA-256 (hex) of the canonical JSON of `content`. */
	hash: string;
	stepKey: string | null;
	/** 1-based position of the step as people say it (2.3), or null. */
	stepLabel: string | null;
	stepTitle: string | null;
	/** Whether QA can mark it reviewed; an unsigned or unverified step must be completed instead. */
	markable: boolean;
	/** What the item is about, as shown (and hashed). */
	content: Record<string, unknown>;
	/** For an entry's item: whether a later correction superseded it (shown, not hashed: the correction is its own item). */
	superseded?: boolean;
}

/** A stored review mark: which item, and the hash of what was reviewed. */
export interface ReviewMarkFacts {
	itemKey: string;
	itemHash: string;
	markedByName?: string;
	markedAt?: string;
	comment?: string | null;
}

export type ReviewState = 'reviewed' | 'needs-review' | 'changed' | 'not-markable';

export function hashReviewContent(content: unknown): string {
	return sha256Hex(canonicalJson(content));
}

/**
 * Audit events that belong to the batch's critical data: issue, entries, corrections,
 * verifications, their signatures, files, cycle runs and leak tests, status changes. Left out:
 * reads (downloads), the review marks themselves (or marking would change the trail it reviews),
 * the disposition, notifications and deviation events (each deviation is its own item with its
 * own history, approved by QA in the deviation workflow).
 */
export function isCriticalDataEvent(e: Pick<ReviewAuditEvent, 'action' | 'entityType' | 'meaning'>): boolean {
	if (e.action === 'signature.sign') return ['step-entry', 'step-verification', 'batch'].includes(e.entityType) && e.meaning !== 'released' && e.meaning !== 'rejected';
	return ['batch.issue', 'batch.status', 'batch.step.perform', 'batch.step.correct', 'batch.step.verify', 'attachment.upload', 'cycle-run.import', 'leak-test.record'].includes(e.action);
}

function pick(values: unknown, keys: readonly string[]): Record<string, unknown> {
	const v = (values ?? {}) as Record<string, unknown>;
	return Object.fromEntries(keys.filter((k) => k in v).map((k) => [k, v[k]]));
}

function item(kind: ReviewItemKind, key: string, step: { key: string; label: string; title: string } | null, content: Record<string, unknown>, markable = true): ReviewItem {
	return { key, kind, hash: hashReviewContent({ kind, key, content }), stepKey: step?.key ?? null, stepLabel: step?.label ?? null, stepTitle: step?.title ?? null, markable, content };
}

/** Every item of the batch that needs a human, in step order, the audit trail last. */
export function computeReviewItems(input: ReviewInput): ReviewItem[] {
	const steps = orderedSteps(input.template).map(({ step, label }) => ({ key: step.key, label, title: step.title, critical: step.critical, fields: step.fields }));
	const stepOf = new Map(steps.map((s) => [s.key, s]));
	const entryById = new Map(input.entries.map((e) => [e.id, e]));
	const verificationOf = new Map(input.verifications.map((v) => [v.entryId, v]));
	const items: ReviewItem[] = [];
	for (const s of steps) {
		const history = chainOf(input.entries.filter((e) => e.stepKey === s.key));
		const current = history.at(-1) ?? null;
		const who = (e: ReviewEntry) => ({ entryId: e.id, performedByName: e.performedByName, workedAt: e.workedAt, recordedAt: e.recordedAt });
		for (const e of history) {
			// 211.192: any value outside its limits is looked at before release, corrected or not.
			if (e.outOfLimits.length > 0) {
				const fields = e.outOfLimits.map((k) => ({ key: k, label: s.fields.find((f) => f.key === k)?.label ?? k }));
				items.push({ ...item('out-of-limit', `out-of-limit:${e.id}`, s, { ...who(e), fields, values: pick(e.values, e.outOfLimits), comment: e.comment }), superseded: e !== current });
			}
			// EU GMP Ch. 4.9; 11.10(e): a correction shows the old value beside the new and its reason.
			if (e.supersedes) {
				const old = entryById.get(e.supersedes);
				items.push(
					item('correction', `correction:${e.id}`, s, {
						...who(e),
						reasonCode: e.reasonCode,
						comment: e.comment,
						oldEntryId: e.supersedes,
						oldValues: old?.values ?? null,
						oldPerformedByName: old?.performedByName ?? null,
						newValues: e.values
					})
				);
			}
			// EU GMP Ch. 4.8: an entry recorded long after the work is looked at.
			if (e.late) items.push(item('late-entry', `late-entry:${e.id}`, s, { ...who(e), comment: e.comment }));
		}
		if (!current) items.push(item('unsigned-step', `unsigned-step:${s.key}`, s, { critical: s.critical }, false));
		else if (s.critical && !verificationOf.has(current.id)) items.push(item('unverified-step', `unverified-step:${s.key}`, s, { entryId: current.id, performedByName: current.performedByName }, false));
	}
	for (const d of input.deviations) {
		// The status is the release gate's to judge (open deviations block it); the item is what QA read.
		const s = d.stepKey ? (stepOf.get(d.stepKey) ?? null) : null;
		items.push(
			item('deviation', `deviation:${d.id}`, s, { deviationId: d.id, number: d.number, kind: d.kind, title: d.title, description: d.description, entryId: d.entryId, runId: d.runId })
		);
	}
	for (const r of input.runs) {
		if (r.excursions.length === 0) continue;
		const s = r.stepKey ? (stepOf.get(r.stepKey) ?? null) : null;
		items.push(item('excursion', `excursion:${r.id}`, s, { runId: r.id, fileName: r.fileName, fileSha256: r.fileSha256, excursions: r.excursions.map((x) => ({ ...x })) }));
	}
	// FDA Data Integrity Q&A (2018) Q7: one item over the audit trail of the batch's critical data.
	const events = input.events.filter(isCriticalDataEvent).sort((a, b) => a.seq - b.seq);
	items.push(item('audit-trail', 'audit-trail', null, { events: events.length, firstSeq: events[0]?.seq ?? null, lastSeq: events.at(-1)?.seq ?? null, chain: events.map((e) => [e.seq, e.hash]) }));
	return items;
}

/** Where an item stands against the marks: reviewed (same hash), changed since the mark, or not yet. */
export function reviewStateOf(item: Pick<ReviewItem, 'key' | 'hash' | 'markable'>, marks: readonly ReviewMarkFacts[]): ReviewState {
	if (!item.markable) return 'not-markable';
	const mine = marks.filter((m) => m.itemKey === item.key);
	if (mine.some((m) => m.itemHash === item.hash)) return 'reviewed';
	return mine.length > 0 ? 'changed' : 'needs-review';
}

/** The markable items not reviewed in their current form. */
export function unreviewedItems<T extends Pick<ReviewItem, 'key' | 'hash' | 'markable'>>(items: readonly T[], marks: readonly ReviewMarkFacts[]): T[] {
	return items.filter((i) => i.markable && reviewStateOf(i, marks) !== 'reviewed');
}
