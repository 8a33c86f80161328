import { describe, expect, it } from 'vitest';
import { findStep, judgeStep } from '$lib/domain/batch/judge';
import { readNumber, type StoredValue } from '$lib/domain/batch/values';
import { demoTemplate } from '$lib/domain/fixtures/demo-template';

const size = { value: 12, unit: 'L' };
const step = findStep(demoTemplate, 'weigh_sucrose')!;
const weighed = (text: string): Map<string, StoredValue> => {
	const r = readNumber({ key: 'sucrose_weighed', unit: 'g', decimals: 1 }, text);
	if (!r.ok) throw new Error(r.problem.message);
	return new Map([['sucrose_weighed', r.value]]);
};

describe('judging a step against the frozen template (judge.ts)', () => {
	// Worked example of the demo master (invented): 12 L × 50 mg/mL = 600 g (1 mg/mL × 1 L = 1 g, SI
	// Brochure 9th ed.), tolerance ±0.5 % relative → 597.0 … 603.0 g; limits are inclusive (USP
	// General Notices 7.20, from memory: a value at the limit, as rounded, conforms).
	it('computes the target on the batch size and resolves the tolerance from it', () => {
		const j = judgeStep(demoTemplate, size, step, weighed('600.4'));
		expect(j.calculations.sucrose_qty).toEqual({ reported: 600, unit: 'g', value: 600 });
		expect(j.fields.sucrose_weighed).toMatchObject({ verdict: 'within', bounds: { min: 597, max: 603 } });
		expect(j.outOfLimits).toEqual([]);
	});

	it('a value at a limit is within; one step of the resolution beyond it is out', () => {
		expect(judgeStep(demoTemplate, size, step, weighed('603.0')).fields.sucrose_weighed.verdict).toBe('within');
		expect(judgeStep(demoTemplate, size, step, weighed('597.0')).fields.sucrose_weighed.verdict).toBe('within');
		const above = judgeStep(demoTemplate, size, step, weighed('603.1'));
		expect(above.fields.sucrose_weighed.verdict).toBe('above');
		expect(above.outOfLimits).toEqual(['sucrose_weighed']);
		expect(judgeStep(demoTemplate, size, step, weighed('596.9')).outOfLimits).toEqual(['sucrose_weighed']);
	});

	it('scales with the batch size: 6 L → 300 g ± 1.5 g', () => {
		const j = judgeStep(demoTemplate, { value: 6, unit: 'L' }, step, weighed('301.6'));
		expect(j.calculations.sucrose_qty).toMatchObject({ reported: 300 });
		expect(j.fields.sucrose_weighed).toMatchObject({ verdict: 'above', bounds: { min: 298.5, max: 301.5 } });
	});

	it('a check that is not the expected answer is unacceptable; an empty field has no verdict', () => {
		const lyo = findStep(demoTemplate, 'lyo_cycle')!;
		const no = judgeStep(demoTemplate, size, lyo, new Map([['cycle_as_recipe', { kind: 'check', value: false } as StoredValue]]));
		expect(no.fields.cycle_as_recipe.verdict).toBe('unacceptable');
		expect(no.outOfLimits).toEqual(['cycle_as_recipe']);
		expect(judgeStep(demoTemplate, size, step, new Map()).fields.sucrose_weighed.verdict).toBe('none');
	});

	it('finds steps by key and nothing else', () => {
		expect(findStep(demoTemplate, 'weigh_sucrose')?.title).toBe('Dispense sucrose');
		expect(findStep(demoTemplate, 'no_such_step')).toBeNull();
	});
});
