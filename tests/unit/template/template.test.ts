import { describe, expect, it } from 'vitest';
import { demoTemplate, demoTemplateInput } from '$lib/domain/fixtures/demo-template';
import { fieldKinds, templateSchema, type FieldInput, type TemplateInput } from '$lib/schemas/template';
import { formatPath, listFormulaNames, reservedReason, validateTemplate, type TemplateIssue } from '$lib/domain/template';
import { checkFormula } from '$lib/domain/formula';

// Synthetic inputs (invented) for the validator.
const header = {
	productName: 'Test product',
	productCode: 'TST-1',
	strength: '10 mg',
	dosageForm: 'powder for injection',
	batchSize: { value: 10, unit: 'L' },
	theoreticalYield: { value: 9000, unit: 'vial', minPercent: 90, maxPercent: 100 },
	version: 1
};

function templateWith(fields: FieldInput[], step: Record<string, unknown> = {}): TemplateInput {
	return {
		schemaVersion: 1,
		header: structuredClone(header),
		sections: [{ key: 'sec', title: 'Section', steps: [{ key: 'step_one', title: 'Step', roles: ['operator'], ...step, fields }] }]
	};
}

const at = (i: number, ...rest: (string | number)[]) => formatPath(['sections', 0, 'steps', 0, 'fields', i, ...rest]);
const summary = (issues: TemplateIssue[]) => issues.map((i) => [formatPath(i.path), i.code]).sort((a, b) => (a[0] + a[1]).localeCompare(b[0] + b[1]));

function issuesOf(input: unknown): TemplateIssue[] {
	const r = validateTemplate(input);
	if (r.ok) throw new Error('expected the template to be refused');
	return r.issues;
}

describe('the demo template', () => {
	it('is valid and holds every field kind', () => {
		const r = validateTemplate(demoTemplateInput);
		expect(r.ok ? [] : r.issues).toEqual([]);
		const kinds = new Set(demoTemplate.sections.flatMap((s) => s.steps.flatMap((st) => st.fields.map((f) => f.kind))));
		expect([...kinds].sort()).toEqual([...fieldKinds].sort());
	});

	it('holds the process from dispensing to yield', () => {
		expect(demoTemplate.sections.map((s) => s.key)).toEqual([
			'dispensing',
			'compounding',
			'filtration',
			'filling',
			'freeze_drying',
			'capping',
			'inspection',
			'yields'
		]);
	});
});

describe('an invalid template is refused with every issue named', () => {
	it('names each semantic issue with its path', () => {
		const input = templateWith(
			[
				{ kind: 'number', key: 'mass_a', label: 'A', unit: 'g', decimals: 1 },
				{ kind: 'number', key: 'vol_b', label: 'B', unit: 'mL', decimals: 0 },
				{ kind: 'number', key: 'mass_a', label: 'A again', unit: 'g', decimals: 1 },
				{ kind: 'number', key: 'range_bad', label: 'C', unit: 'g', decimals: 1, limits: { kind: 'range', min: 5, max: 3 } },
				{ kind: 'number', key: 'target_bad', label: 'D', unit: 'g', decimals: 1, limits: { kind: 'range', min: 1, max: 2, target: 3 } },
				{ kind: 'number', key: 'tol_bad', label: 'E', unit: 'g', decimals: 1, limits: { kind: 'tolerance', target: 5, tolerance: -1 } },
				{ kind: 'calculated', key: 'parse_bad', label: 'F', formula: '2 * (mass_a', unit: 'g', decimals: 1 },
				{ kind: 'calculated', key: 'ghost_ref', label: 'G', formula: 'ghost * 2', unit: 'g', decimals: 1 },
				{ kind: 'calculated', key: 'mixed', label: 'H', formula: 'mass_a + vol_b', unit: 'g', decimals: 1 },
				{ kind: 'calculated', key: 'loop_a', label: 'I', formula: 'loop_b + 1 g', unit: 'g', decimals: 1 },
				{ kind: 'calculated', key: 'loop_b', label: 'J', formula: 'loop_a * 2', unit: 'g', decimals: 1 },
				{ kind: 'calculated', key: 'escape', label: 'K', formula: 'import({}, {override: true})', unit: 'g', decimals: 1 },
				{ kind: 'number', key: 'mg', label: 'L', unit: 'g', decimals: 1 },
				{
					kind: 'choice',
					key: 'pick',
					label: 'M',
					options: [
						{ value: 'a', label: 'A' },
						{ value: 'a', label: 'A twice' }
					],
					acceptable: ['z']
				},
				{ kind: 'material', key: 'lot_x', label: 'N', itemCode: 'EXC-9' }
			]
		);
		const issues = issuesOf(input);
		expect(summary(issues)).toEqual(
			[
				[at(2, 'key'), 'key.duplicate'],
				[at(3, 'limits', 'min'), 'limits.contradict'],
				[at(4, 'limits', 'target'), 'limits.target-outside'],
				[at(5, 'limits', 'tolerance'), 'limits.tolerance-negative'],
				[at(6, 'formula'), 'formula.parse'],
				[at(7, 'formula'), 'formula.unknown-name'],
				[at(8, 'formula'), 'formula.unit-mismatch'],
				[at(9, 'formula'), 'formula.cycle'],
				[at(11, 'formula'), 'formula.not-allowed'],
				[at(12, 'key'), 'key.reserved'],
				[at(13, 'options', 1, 'value'), 'choice.duplicate'],
				[at(13, 'acceptable', 0), 'choice.acceptable-unknown'],
				[at(14, 'itemCode'), 'material.not-listed']
			].sort((a, b) => (a[0] + a[1]).localeCompare(b[0] + b[1]))
		);
		expect(issues).toHaveLength(13);
		const message = (code: string) => issues.find((i) => i.code === code)?.message;
		expect(message('formula.cycle')).toBe('calculated fields form a cycle: loop_a → loop_b → loop_a');
		expect(message('formula.unit-mismatch')).toBe('units do not match: g and mL (in mass_a + vol_b)');
		expect(message('formula.unknown-name')).toBe('ghost is neither a field, a batch value nor a unit (in ghost)');
		expect(message('key.duplicate')).toBe(`the key mass_a is already used at ${formatPath(['sections', 0, 'steps', 0, 'fields', 0])}`);
		expect(message('key.reserved')).toBe('the key mg cannot be used: it is also a unit');
	});

	it('names shape issues and the semantic issues of the parts that have the right shape', () => {
		const input = templateWith([
			{ kind: 'number', key: 'no_decimals', label: 'A', unit: 'g' } as unknown as FieldInput, // decimals missing
			{ kind: 'calculated', key: 'uses_broken', label: 'B', formula: 'no_decimals * 2', unit: 'g', decimals: 1 },
			{ kind: 'number', key: 'uses_broken', label: 'C', unit: 'g', decimals: 1, limits: { kind: 'range', min: 2, max: 1 } },
			{ kind: 'banana', key: 'fruit', label: 'D' } as unknown as FieldInput
		]) as { header: Record<string, unknown>; sections: { steps: Record<string, unknown>[] }[] };
		delete input.header.productName;
		delete input.sections[0].steps[0].roles;
		const issues = issuesOf(input);
		expect(summary(issues)).toEqual(
			[
				['header.productName', 'schema.invalid_type'],
				[formatPath(['sections', 0, 'steps', 0, 'roles']), 'schema.invalid_type'],
				[at(0, 'decimals'), 'schema.invalid_type'],
				[at(3, 'kind'), 'schema.invalid_union'],
				[at(2, 'key'), 'key.duplicate'],
				[at(2, 'limits', 'min'), 'limits.contradict']
			].sort((a, b) => (a[0] + a[1]).localeCompare(b[0] + b[1]))
		);
		// The formula's use of the broken field is not reported a second time as "unknown".
		expect(issues.some((i) => i.code === 'formula.unknown-name')).toBe(false);
	});

	it('refuses what is not a template at all', () => {
		expect(issuesOf(null).length).toBeGreaterThan(0);
		expect(summary(issuesOf({ schemaVersion: 2, header, sections: [] }))).toEqual([
			['schemaVersion', 'schema.invalid_value'],
			['sections', 'schema.too_small']
		]);
		expect(summary(issuesOf({ ...templateWith([]), extra: true }))).toEqual([['', 'schema.unrecognized_keys']]);
	});
});

describe('checks of limits, units and links between fields', () => {
	it('checks targetFrom, limit precision and the USP <905> reading count', () => {
		const issues = issuesOf(
			templateWith([
				{ kind: 'number', key: 'plain', label: 'A', unit: 'g', decimals: 1 },
				{ kind: 'calculated', key: 'volume', label: 'B', formula: 'batch_size * 0.1', unit: 'mL', decimals: 0 },
				{ kind: 'calculated', key: 'mass_calc', label: 'B2', formula: 'batch_size * 1 g/mL', unit: 'g', decimals: 1 },
				{ kind: 'number', key: 'w1', label: 'C', unit: 'g', decimals: 1, limits: { kind: 'tolerance', targetFrom: 'plain', tolerance: 1 } },
				{ kind: 'number', key: 'w2', label: 'D', unit: 'g', decimals: 1, limits: { kind: 'tolerance', targetFrom: 'volume', tolerance: 1 } },
				{ kind: 'number', key: 'w3', label: 'E', unit: 'g', decimals: 1, limits: { kind: 'tolerance', tolerance: 1 } },
				{ kind: 'number', key: 'w4', label: 'F', unit: 'g', decimals: 1, limits: { kind: 'tolerance', target: 1, targetFrom: 'mass_calc', tolerance: 1 } },
				{ kind: 'number', key: 'w5', label: 'G', unit: 'g', decimals: 1, limits: { kind: 'range', min: 1.25 } },
				{ kind: 'number', key: 'w6', label: 'H', unit: 'g', decimals: 1, limits: { kind: 'range' } },
				{ kind: 'repeated', key: 'r1', label: 'I', unit: 'g', decimals: 3, count: 20, acceptanceValue: { labelClaim: 1 } }
			])
		);
		expect(summary(issues)).toEqual(
			[
				[at(3, 'limits', 'targetFrom'), 'limits.target-from'],
				[at(4, 'limits', 'targetFrom'), 'limits.target-from-unit'],
				[at(5, 'limits', 'target'), 'limits.target-missing'],
				[at(6, 'limits', 'targetFrom'), 'limits.target-twice'],
				[at(7, 'limits', 'min'), 'limits.precision'],
				[at(8, 'limits'), 'limits.empty'],
				[at(9, 'count'), 'av.count']
			].sort((a, b) => (a[0] + a[1]).localeCompare(b[0] + b[1]))
		);
	});

	it('checks units, the header and formulas over other kinds of field', () => {
		const input = templateWith(
			[
				{ kind: 'number', key: 'odd_unit', label: 'A', unit: 'furlongs', decimals: 1 },
				{ kind: 'calculated', key: 'uses_odd', label: 'B', formula: 'odd_unit * 2', unit: 'g', decimals: 1 },
				{ kind: 'text', key: 'note', label: 'C' },
				{ kind: 'calculated', key: 'uses_text', label: 'D', formula: 'note * 2', unit: '', decimals: 1 },
				{ kind: 'yield', key: 'y1', label: 'E', unit: 'vial', actualFormula: 'batch_size' },
				{ kind: 'equipment', key: 'eq', label: 'F', equipmentClass: 'balance' }
			],
			{ roles: ['operator', 'operator'], materials: [{ itemCode: 'X-1', name: 'X', quantityFrom: 'note' }] }
		) as { header: Record<string, unknown> };
		input.header = { ...header, batchSize: { value: 10, unit: 'L', min: 12, max: 11 }, theoreticalYield: { value: 1, unit: 'vial', minPercent: 101, maxPercent: 100 } };
		const issues = issuesOf(input);
		const step = (...rest: (string | number)[]) => formatPath(['sections', 0, 'steps', 0, ...rest]);
		expect(summary(issues)).toEqual(
			[
				['header.batchSize.min', 'limits.contradict'],
				['header.theoreticalYield.minPercent', 'limits.contradict'],
				[at(0, 'unit'), 'unit.unknown'],
				[at(3, 'formula'), 'formula.field-kind'],
				[at(4, 'actualFormula'), 'formula.result-unit'],
				[at(5, 'equipmentClass'), 'equipment.not-listed'],
				[step('roles', 1), 'step.duplicate-role'],
				[step('materials', 0, 'quantityFrom'), 'step.quantity-from']
			].sort((a, b) => (a[0] + a[1]).localeCompare(b[0] + b[1]))
		);
		// uses_odd is not blamed for its input's broken unit: that issue is reported once, at the unit.
		expect(issues.some((i) => formatPath(i.path) === at(1, 'formula'))).toBe(false);
	});

	it('reports each cycle once, from its first field, and a field that uses itself', () => {
		const issues = issuesOf(
			templateWith([
				{ kind: 'calculated', key: 'c_one', label: 'A', formula: 'c_three + 1', unit: '', decimals: 1 },
				{ kind: 'calculated', key: 'c_two', label: 'B', formula: 'c_one * 2', unit: '', decimals: 1 },
				{ kind: 'calculated', key: 'c_three', label: 'C', formula: 'c_two / 3', unit: '', decimals: 1 },
				{ kind: 'calculated', key: 'selfish', label: 'D', formula: 'selfish + 1', unit: '', decimals: 1 },
				{ kind: 'calculated', key: 'downstream', label: 'E', formula: 'c_one + selfish', unit: '', decimals: 1 }
			])
		);
		expect(issues.map((i) => [formatPath(i.path), i.message])).toEqual([
			[at(0, 'formula'), 'calculated fields form a cycle: c_one → c_three → c_two → c_one'],
			[at(3, 'formula'), 'calculated fields form a cycle: selfish → selfish']
		]);
	});

	it('refuses recipe fields whose recipe is invalid, with the path into the recipe', () => {
		const recipe = structuredClone(
			(demoTemplate.sections[4].steps[1].fields[0] as { recipe: unknown }).recipe
		) as { primaryDrying: { steps: { chamberPressurePa: number | null; pressureMinPa: number | null; pressureMaxPa: number | null }[] } };
		Object.assign(recipe.primaryDrying.steps[1], { chamberPressurePa: null, pressureMinPa: null, pressureMaxPa: null });
		const issues = issuesOf(templateWith([{ kind: 'recipe', key: 'cycle', label: 'Cycle', recipe } as FieldInput]));
		expect(summary(issues)).toEqual([[at(0, 'recipe', 'primaryDrying', 'steps', 1, 'chamberPressurePa'), 'schema.custom']]);
	});
});

describe('keys', () => {
	it('refuses keys a formula would read as something else', () => {
		expect(reservedReason('batch_size')).toBe('it names a batch value');
		expect(reservedReason('to')).toBe('it is a formula keyword');
		expect(reservedReason('round')).toBe('it is a formula function');
		expect(reservedReason('min')).toBe('it is a formula function');
		expect(reservedReason('kg')).toBe('it is also a unit');
		expect(reservedReason('mtorr')).toBe('it is also a unit'); // prefixed, lower-case torr
		expect(reservedReason('sucrose_qty')).toBeNull();
	});

	it('applies the key pattern in the schema', () => {
		const r = templateSchema.safeParse(templateWith([{ kind: 'text', key: 'Bad Key', label: 'A' }]));
		expect(r.success).toBe(false);
	});
});

describe('checking one formula while it is typed', () => {
	it('offers the batch values and the number, calculated and repeated fields with their units', () => {
		const names = listFormulaNames(demoTemplate);
		expect(names.get('batch_size')).toBe('L');
		expect(names.get('theoretical_yield')).toBe('vial');
		expect(names.get('bulk_density')).toBe('g/mL');
		expect(names.get('fill_weights')).toBe('g'); // its mean
		expect(names.has('bulk_appearance')).toBe(false); // a choice
		expect(checkFormula('batch_size * bulk_density', names, 'kg').ok).toBe(true);
		expect(checkFormula('batch_size + bulk_density', names, 'kg').issues[0].code).toBe('unit-mismatch');
	});
});
