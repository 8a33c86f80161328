import { describe, expect, it } from 'vitest';
import { chainOf, computeProgress, orderedSteps, type EntryFacts } from '$lib/domain/batch/progress';
import { demoTemplate } from '$lib/domain/fixtures/demo-template';

const steps = orderedSteps(demoTemplate);
const first = steps[0];
const entry = (id: string, stepKey: string, supersedes: string | null = null, outOfLimits: string[] = []): EntryFacts => ({ id, stepKey, supersedes, performedBy: 'u-op', recordedAt: '2026-12-01T10:00:00Z', outOfLimits });

describe('where a batch record stands (progress.ts)', () => {
	it('labels steps as people say them (section.step) in template order', () => {
		expect(steps.slice(0, 2).map((s) => s.label)).toEqual(['1.1', '1.2']);
		expect(first.step.key).toBe('weigh_sucrose');
	});

	// 21 CFR 11.10(f): operational checks enforce the permitted sequence of steps.
	it('a step waits for every earlier step not yet performed, unless it may run out of order', () => {
		const p = computeProgress(demoTemplate, { entries: [], verifications: [], deviations: [] });
		expect(p.steps[0].waitingFor).toEqual([]);
		expect(p.steps[1].waitingFor).toEqual(['weigh_sucrose']);
		for (const s of p.steps) if (s.mayRunOutOfOrder) expect(s.waitingFor).toEqual([]);
		expect(p.next).toBe('weigh_sucrose');
		expect(p.steps.every((s) => s.state === 'not-started')).toBe(true);
	});

	// 21 CFR 211.188(b)(11): a critical step is checked by a second person; only then is it done.
	it('a critical step is performed until verified, and counts as done only when verified', () => {
		expect(first.step.critical).toBe(true);
		const performed = computeProgress(demoTemplate, { entries: [entry('e1', first.step.key)], verifications: [], deviations: [] });
		expect(performed.steps[0]).toMatchObject({ state: 'performed', done: false });
		expect(performed.done).toBe(0);
		const verified = computeProgress(demoTemplate, { entries: [entry('e1', first.step.key)], verifications: [{ entryId: 'e1', verifiedBy: 'u-sup' }], deviations: [] });
		expect(verified.steps[0]).toMatchObject({ state: 'verified', done: true });
		expect(verified.done).toBe(1);
		expect(verified.percent).toBe(Math.round(100 / steps.length));
	});

	// EU GMP Ch. 4.9: a correction supersedes, the original stays; a verification of the superseded entry no longer counts.
	it('a correction chain ends in the entry in force; the old verification does not carry over', () => {
		const entries = [entry('e2', first.step.key, 'e1'), entry('e1', first.step.key)];
		expect(chainOf(entries).map((e) => e.id)).toEqual(['e1', 'e2']);
		const p = computeProgress(demoTemplate, { entries, verifications: [{ entryId: 'e1', verifiedBy: 'u-sup' }], deviations: [] });
		expect(p.steps[0].current?.id).toBe('e2');
		expect(p.steps[0]).toMatchObject({ state: 'performed', done: false });
	});

	// 21 CFR 211.192: a deviation is investigated; the step shows it until QA closes it (design.md step states).
	it('an open deviation makes the step need attention; closed or cancelled it does not', () => {
		const base = { entries: [entry('e1', first.step.key)], verifications: [{ entryId: 'e1', verifiedBy: 'u-sup' }] };
		expect(computeProgress(demoTemplate, { ...base, deviations: [{ stepKey: first.step.key, status: 'investigating' }] }).steps[0].state).toBe('needs-attention');
		expect(computeProgress(demoTemplate, { ...base, deviations: [{ stepKey: first.step.key, status: 'closed' }] }).steps[0].state).toBe('verified');
		expect(computeProgress(demoTemplate, { ...base, deviations: [{ stepKey: first.step.key, status: 'cancelled' }] }).steps[0].state).toBe('verified');
	});

	it('files attached to a step not yet signed make it in progress', () => {
		const p = computeProgress(demoTemplate, { entries: [], verifications: [], deviations: [], attachmentSteps: new Set([first.step.key]) });
		expect(p.steps[0].state).toBe('in-progress');
	});
});
