import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { computeReviewItems, hashReviewContent, isCriticalDataEvent, reviewStateOf, unreviewedItems, type ReviewAuditEvent, type ReviewEntry, type ReviewInput, type ReviewVerification } from '$lib/domain/review';
import { orderedSteps } from '$lib/domain/batch/progress';
import { demoTemplate } from '$lib/domain/fixtures/demo-template';
import { canonicalJson } from '$lib/domain/canonical';

// Invented records of the demo template (no real batch): one entry per step, critical ones verified.
const steps = orderedSteps(demoTemplate);
const at = '2026-12-01T10:00:00.000Z';
function entry(stepKey: string, extra: Partial<ReviewEntry> = {}): ReviewEntry {
	return { id: `e-${stepKey}`, stepKey, values: { x: { kind: 'text', value: 'ok' } }, outOfLimits: [], comment: null, reasonCode: null, supersedes: null, workedAt: at, recordedAt: at, late: false, performedBy: 'u-op', performedByName: 'Op Invented', ...extra };
}
type Input = ReviewInput & { entries: ReviewEntry[]; verifications: ReviewVerification[] };
function complete(): Input {
	const entries = steps.map((s) => entry(s.step.key));
	const verifications = steps.filter((s) => s.step.critical).map((s) => ({ entryId: `e-${s.step.key}`, verifiedBy: 'u-sup', verifiedByName: 'Sup Invented', verifiedAt: at }));
	const events: ReviewAuditEvent[] = entries.map((e, i) => ({ seq: i + 10, hash: `h${i}`, at, actorName: 'Op Invented', action: 'batch.step.perform', entityType: 'step-entry', entityId: e.id, reason: null }));
	return { template: demoTemplate, entries, verifications, deviations: [], runs: [], events };
}
const kinds = (input: ReviewInput) => computeReviewItems(input).map((i) => i.kind);

describe('review by exception: the items that need a human (review.ts)', () => {
	// 21 CFR 211.192; FDA Data Integrity Q&A (2018) Q7: a clean, complete batch still has its audit trail reviewed.
	it('a complete batch without exceptions has exactly one item: the audit trail of its critical data', () => {
		const items = computeReviewItems(complete());
		expect(items.map((i) => i.key)).toEqual(['audit-trail']);
		expect(items[0]).toMatchObject({ kind: 'audit-trail', markable: true });
		expect(items[0].content).toMatchObject({ events: steps.length, firstSeq: 10, lastSeq: 10 + steps.length - 1 });
	});

	// 21 CFR 211.188(b): every significant step is signed; these items cannot be marked away.
	it('steps without an entry are unsigned-step items that cannot be marked reviewed', () => {
		const input = { ...complete(), entries: [], verifications: [] };
		const items = computeReviewItems(input).filter((i) => i.kind === 'unsigned-step');
		expect(items).toHaveLength(steps.length);
		expect(items.every((i) => !i.markable)).toBe(true);
		expect(items[0]).toMatchObject({ key: 'unsigned-step:weigh_sucrose', stepLabel: '1.1' });
		expect(reviewStateOf(items[0], [{ itemKey: items[0].key, itemHash: items[0].hash }])).toBe('not-markable');
	});

	// 21 CFR 211.188(b)(11): a critical step needs a second person's verification.
	it('a critical step performed but not verified is an unverified-step item', () => {
		const input = complete();
		input.verifications = input.verifications.filter((v) => v.entryId !== 'e-add_ds');
		const items = computeReviewItems(input).filter((i) => i.kind === 'unverified-step');
		expect(items.map((i) => i.key)).toEqual(['unverified-step:add_ds']);
		expect(items[0].markable).toBe(false);
	});

	// 21 CFR 211.192: values outside their limits are reviewed before release.
	it('an out-of-limit entry is an item naming the fields, their values and the comment', () => {
		const input = complete();
		const i = input.entries.findIndex((e) => e.stepKey === 'prepare_buffer');
		input.entries[i] = entry('prepare_buffer', { outOfLimits: ['wfi_temperature'], values: { wfi_temperature: { kind: 'number', value: 27.1, text: '27.1', unit: 'degC' } }, comment: 'Cooler slow (invented)' });
		const [item] = computeReviewItems(input).filter((x) => x.kind === 'out-of-limit');
		expect(item.key).toBe('out-of-limit:e-prepare_buffer');
		expect(item.content).toMatchObject({ fields: [{ key: 'wfi_temperature', label: 'Water for injection temperature' }], values: { wfi_temperature: { text: '27.1' } }, comment: 'Cooler slow (invented)' });
		expect(item.superseded).toBe(false);
	});

	// EU GMP Ch. 4.9; 21 CFR 11.10(e): a correction shows the old value, the new one and the reason.
	it('a correction is an item with the old values, the new values and the reason; the superseded out-of-limit value stays listed', () => {
		const input = complete();
		const i = input.entries.findIndex((e) => e.stepKey === 'prepare_buffer');
		const old = entry('prepare_buffer', { id: 'e-old', outOfLimits: ['wfi_temperature'], values: { wfi_temperature: { kind: 'number', value: 72.1, text: '72.1', unit: 'degC' } }, comment: 'typo' });
		input.entries[i] = entry('prepare_buffer', { id: 'e-new', supersedes: 'e-old', reasonCode: 'transcription-error', comment: 'digits swapped', values: { wfi_temperature: { kind: 'number', value: 21.7, text: '21.7', unit: 'degC' } } });
		input.entries.push(old);
		input.verifications = input.verifications.map((v) => v);
		const items = computeReviewItems(input);
		const correction = items.find((x) => x.kind === 'correction')!;
		expect(correction.key).toBe('correction:e-new');
		expect(correction.content).toMatchObject({ reasonCode: 'transcription-error', comment: 'digits swapped', oldEntryId: 'e-old', oldValues: { wfi_temperature: { text: '72.1' } }, newValues: { wfi_temperature: { text: '21.7' } } });
		expect(items.find((x) => x.kind === 'out-of-limit')).toMatchObject({ key: 'out-of-limit:e-old', superseded: true });
	});

	// EU GMP Ch. 4.8: entries made at the time of the action; a late one is looked at.
	it('a late entry is an item', () => {
		const input = complete();
		input.entries[2] = { ...input.entries[2], late: true, workedAt: '2026-12-01T06:00:00.000Z' };
		expect(computeReviewItems(input).filter((x) => x.kind === 'late-entry').map((x) => x.key)).toEqual([`late-entry:${input.entries[2].id}`]);
	});

	// 21 CFR 211.192: every deviation is part of the review; its status is the release gate's to judge.
	it('a deviation is an item whose hash follows its content but not its status', () => {
		const dev = { id: 'd1', number: 'DEV-2026-7', stepKey: 'add_ds', entryId: null, runId: null, kind: 'manual', title: 'Foaming (invented)', description: 'Foam seen', status: 'open' };
		const a = computeReviewItems({ ...complete(), deviations: [dev] }).find((x) => x.kind === 'deviation')!;
		const closed = computeReviewItems({ ...complete(), deviations: [{ ...dev, status: 'closed' }] }).find((x) => x.kind === 'deviation')!;
		const edited = computeReviewItems({ ...complete(), deviations: [{ ...dev, description: 'Foam seen, 2 min' }] }).find((x) => x.kind === 'deviation')!;
		expect(a).toMatchObject({ key: 'deviation:d1', stepLabel: '2.2' });
		expect(closed.hash).toBe(a.hash);
		expect(edited.hash).not.toBe(a.hash);
	});

	// Annex 15 / common practice: freeze-drying excursions against the recipe are reviewed.
	it('a cycle run with excursions is an item; a run without none', () => {
		const runs = [
			{ id: 'r1', stepKey: 'lyo_cycle', fileName: 'a.csv', fileSha256: 'aa', excursions: [{ channel: 'shelf-1', kind: 'above', startS: 72000, endS: 74400, durationS: 2400, peak: -21 }] },
			{ id: 'r2', stepKey: 'lyo_cycle', fileName: 'b.csv', fileSha256: 'bb', excursions: [] }
		];
		const items = computeReviewItems({ ...complete(), runs }).filter((x) => x.kind === 'excursion');
		expect(items.map((x) => x.key)).toEqual(['excursion:r1']);
		expect(items[0].content).toMatchObject({ fileName: 'a.csv', excursions: [{ channel: 'shelf-1', durationS: 2400 }] });
	});

	// FDA Data Integrity Q&A (2018) Q7: the trail of critical data; marking it must not change it.
	it('the audit-trail item covers critical data only: review marks, downloads, deviation events and the disposition signature leave its hash alone', () => {
		const base = complete();
		const h = computeReviewItems(base).at(-1)!.hash;
		const noise: ReviewAuditEvent[] = [
			{ seq: 900, hash: 'n1', at, actorName: 'QA', action: 'review.mark', entityType: 'review-mark', entityId: 'm', reason: null },
			{ seq: 901, hash: 'n2', at, actorName: 'QA', action: 'attachment.download', entityType: 'attachment', entityId: 'a', reason: null },
			{ seq: 902, hash: 'n3', at, actorName: 'QA', action: 'deviation.transition', entityType: 'deviation', entityId: 'd', reason: null },
			{ seq: 903, hash: 'n4', at, actorName: 'QA', action: 'signature.sign', entityType: 'deviation', entityId: 'd', reason: null, meaning: 'approved' },
			{ seq: 904, hash: 'n5', at, actorName: 'QA', action: 'signature.sign', entityType: 'batch', entityId: 'b', reason: null, meaning: 'released' }
		];
		expect(computeReviewItems({ ...base, events: [...base.events, ...noise] }).at(-1)!.hash).toBe(h);
		const correction: ReviewAuditEvent = { seq: 905, hash: 'c1', at, actorName: 'Op', action: 'batch.step.correct', entityType: 'step-entry', entityId: 'e2', reason: 'other' };
		expect(computeReviewItems({ ...base, events: [...base.events, correction] }).at(-1)!.hash).not.toBe(h);
		expect(isCriticalDataEvent({ action: 'signature.sign', entityType: 'step-verification', meaning: 'verified' })).toBe(true);
		expect(isCriticalDataEvent({ action: 'cycle-run.import', entityType: 'cycle-run' })).toBe(true);
	});

	it('keys and hashes are stable across recomputation; a mark counts until the item changes, then it needs review again', () => {
		const input = complete();
		const first = computeReviewItems(input);
		expect(computeReviewItems(complete())).toEqual(first);
		const marks = first.filter((i) => i.markable).map((i) => ({ itemKey: i.key, itemHash: i.hash }));
		expect(unreviewedItems(first, marks)).toEqual([]);
		// A correction arrives after the marks: the trail item changes, and so does the new correction item.
		const later = { ...input, entries: [...input.entries, entry('thaw_ds', { id: 'e-thaw2', supersedes: 'e-thaw_ds', reasonCode: 'other', comment: 'x' })], events: [...input.events, { seq: 99, hash: 'z', at, actorName: 'Op', action: 'batch.step.correct', entityType: 'step-entry', entityId: 'e-thaw2', reason: 'other' }] };
		const after = computeReviewItems(later);
		expect(reviewStateOf(after.find((i) => i.key === 'audit-trail')!, marks)).toBe('changed');
		expect(reviewStateOf(after.find((i) => i.key === 'correction:e-thaw2')!, marks)).toBe('needs-review');
		expect(unreviewedItems(after, marks).map((i) => i.key).sort()).toEqual(['audit-trail', 'correction:e-thaw2']);
	});

	// RFC 8785 canonical JSON, hashed with SHA-256 (FIPS 180-4); reference: Node's OpenSSL SHA-256.
	it('the item hash is SHA-256 over the RFC 8785 canonical JSON of kind, key and content', () => {
		const [item] = computeReviewItems(complete());
		const reference = createHash('sha256').update(canonicalJson({ kind: item.kind, key: item.key, content: item.content })).digest('hex');
		expect(item.hash).toBe(reference);
		// RFC 8785 orders keys: the same content written in another order hashes the same.
		expect(hashReviewContent({ b: 1, a: [2, 'x'] })).toBe(createHash('sha256').update('{"a":[2,"x"],"b":1}').digest('hex'));
	});
});
