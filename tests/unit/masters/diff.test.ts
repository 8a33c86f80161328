import { describe, expect, test } from 'vitest';
import { diffLines, diffTemplates, formatLimits } from '$lib/domain/template-diff';
import { demoTemplate } from '$lib/domain/fixtures/demo-template';
import type { Template } from '$lib/schemas/template';

const copy = (): Template => structuredClone(demoTemplate);

describe('diffTemplates: what changed between two versions', () => {
	test('the same content is no change; version and status alone are not content', () => {
		const b = copy();
		b.header.version = 3;
		b.header.status = 'draft';
		const d = diffTemplates(demoTemplate, b);
		expect(d.same).toBe(true);
		expect(d.changes).toEqual([]);
	});

	test('a changed limit names the field, where it is, and the old and new limits in words', () => {
		const b = copy();
		const f = b.sections[1].steps[1].fields[1];
		if (f.kind !== 'number') throw new Error('fixture changed');
		f.limits = { kind: 'range', min: 10, max: 20 };
		const d = diffTemplates(demoTemplate, b);
		expect(d.changes).toEqual([
			{ kind: 'changed', level: 'field', key: 'mixing_time', where: ['Compounding', 'Add the drug substance', 'Mixing time'], property: 'limits', before: '10 … 30 min', after: '10 … 20 min' }
		]);
		expect(d.counts).toEqual({ added: 0, removed: 0, changed: 1, moved: 0 });
	});

	test('added, removed and moved steps and fields are told apart from changes', () => {
		const b = copy();
		const [dispensing] = b.sections;
		// Move "Thaw the drug substance" before the buffer salts, remove a field, add a field.
		const thaw = dispensing.steps.splice(2, 1)[0];
		dispensing.steps.splice(1, 0, thaw);
		thaw.fields = thaw.fields.filter((f) => f.key !== 'ds_thawed_at');
		thaw.fields.push({ kind: 'text', key: 'thaw_remarks', label: 'Remarks', required: false, maxLength: 200, multiline: false });
		const d = diffTemplates(demoTemplate, b);
		const summary = d.changes.map((c) => `${c.kind} ${c.level} ${c.key}`);
		expect(summary).toContain('added field thaw_remarks');
		expect(summary).toContain('removed field ds_thawed_at');
		// Moving one step is one move, not a move of every step after it.
		const moves = summary.filter((s) => s.startsWith('moved'));
		expect(moves).toHaveLength(1);
		expect(['moved step thaw_ds', 'moved step weigh_buffer']).toContain(moves[0]);
	});

	test('a step moved to another section says from where to where', () => {
		const b = copy();
		const step = b.sections[1].steps.pop()!;
		b.sections[2].steps.unshift(step);
		const moved = diffTemplates(demoTemplate, b).changes.filter((c) => c.kind === 'moved');
		expect(moved).toEqual([{ kind: 'moved', level: 'step', key: 'adjust_bulk', where: ['Sterile filtration', 'Make up to weight and test the bulk'], before: 'Compounding', after: 'Sterile filtration' }]);
	});

	test('instructions are compared line by line; header values by property', () => {
		const b = copy();
		b.sections[0].steps[0].instructions = b.sections[0].steps[0].instructions.replace('2. Tare the container.', '2. Tare the container and note its ID.');
		b.header.batchSize = { ...b.header.batchSize, max: 18 };
		const d = diffTemplates(demoTemplate, b);
		const header = d.changes.find((c) => c.level === 'header')!;
		expect([header.property, header.before, header.after]).toEqual(['batchSize', '{max: 15, min: 6, unit: "L", value: 12}', '{max: 18, min: 6, unit: "L", value: 12}']);
		const text = d.changes.find((c) => c.property === 'instructions')!;
		expect(text.lines?.filter((l) => l.op !== 'same')).toEqual([
			{ op: 'removed', text: '2. Tare the container.' },
			{ op: 'added', text: '2. Tare the container and note its ID.' }
		]);
	});

	test('a removed section and an added one', () => {
		const b = copy();
		const capping = b.sections.splice(5, 1)[0];
		b.sections.push({ ...capping, key: 'capping_new', title: 'Capping (new line)', steps: capping.steps.map((s) => ({ ...s, key: `${s.key}_new`, fields: s.fields.map((f) => ({ ...f, key: `${f.key}_new` })) })) });
		const kinds = diffTemplates(demoTemplate, b).changes.filter((c) => c.level === 'section').map((c) => `${c.kind} ${c.key}`);
		expect(kinds).toEqual(['added capping_new', 'removed capping']);
	});
});

describe('diffLines (longest common subsequence)', () => {
	// The classic example of Myers (1986), "An O(ND) difference algorithm": A = ABCABBA, B = CBABAC
	// has a longest common subsequence of length 4, so an edit script of 5 lines (D = 5).
	test('Myers example ABCABBA → CBABAC: 4 lines kept, 5 edits', () => {
		const r = diffLines('A\nB\nC\nA\nB\nB\nA', 'C\nB\nA\nB\nA\nC');
		expect(r.filter((l) => l.op === 'same')).toHaveLength(4);
		expect(r.filter((l) => l.op !== 'same')).toHaveLength(5);
		// Replaying the script gives back both texts.
		expect(r.filter((l) => l.op !== 'added').map((l) => l.text).join('')).toBe('ABCABBA');
		expect(r.filter((l) => l.op !== 'removed').map((l) => l.text).join('')).toBe('CBABAC');
	});

	test('empty to text and back', () => {
		expect(diffLines('', 'a\nb')).toEqual([{ op: 'added', text: 'a' }, { op: 'added', text: 'b' }]);
		expect(diffLines('a', '')).toEqual([{ op: 'removed', text: 'a' }]);
	});
});

describe('formatLimits', () => {
	test('range, open range, absolute and relative tolerance', () => {
		expect(formatLimits({ kind: 'range', min: 5.8, max: 6.2, target: 6 })).toBe('5.8 … 6.2 (target 6)');
		expect(formatLimits({ kind: 'range', max: 2 }, 'bar')).toBe('–∞ … 2 bar');
		expect(formatLimits({ kind: 'tolerance', target: 500, tolerance: 2.5, relative: false }, 'g')).toBe('target 500 g ± 2.5 g');
		expect(formatLimits({ kind: 'tolerance', targetFrom: 'sucrose_qty', tolerance: 0.5, relative: true }, 'g')).toBe('target from sucrose_qty ± 0.5 %');
		expect(formatLimits(undefined)).toBe('—');
	});
});
