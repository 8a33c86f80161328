import type { FieldInput, FieldKind, TemplateInput } from '$lib/schemas/template';

type StepInput = TemplateInput['sections'][number]['steps'][number];
type SectionInput = TemplateInput['sections'][number];

/** A key not used yet in the template: `base`, `base_2`, `base_3` … */
export function freshKey(t: TemplateInput, base: string): string {
	const used = new Set<string>();
	for (const s of t.sections) {
		used.add(s.key);
		for (const st of s.steps) {
			used.add(st.key);
			for (const f of st.fields ?? []) used.add(f.key);
		}
	}
	if (!used.has(base)) return base;
	for (let i = 2; ; i++) if (!used.has(`${base}_${i}`)) return `${base}_${i}`;
}

/** A new field of a kind, keeping the key and label the author already typed. */
export function makeField(kind: FieldKind, key: string, label: string): FieldInput {
	const base = { key, label };
	switch (kind) {
		case 'number':
			return { ...base, kind, unit: '', decimals: 1 };
		case 'text':
			return { ...base, kind };
		case 'choice':
			return { ...base, kind, options: [{ value: 'yes', label: 'Yes' }, { value: 'no', label: 'No' }] };
		case 'check':
			return { ...base, kind, expected: true };
		case 'datetime':
			return { ...base, kind };
		case 'material':
			return { ...base, kind, itemCode: 'ITEM-0001' };
		case 'equipment':
			return { ...base, kind, equipmentClass: 'class' };
		case 'calculated':
			return { ...base, kind, formula: 'batch_size * 1', unit: '', decimals: 2 };
		case 'attachment':
			return { ...base, kind, accept: ['application/pdf'] };
		case 'repeated':
			return { ...base, kind, unit: 'g', decimals: 3, count: 10 };
		case 'yield':
			return { ...base, kind, unit: 'vial' };
		case 'recipe':
			return {
				...base,
				kind,
				recipe: {
					loadingShelfC: 5,
					freezing: { steps: [{ shelfSetpointC: -45, rampRateCPerMin: 1, holdMin: 120, chamberPressurePa: null, shelfToleranceC: 3, pressureMinPa: null, pressureMaxPa: null }] },
					annealing: null,
					primaryDrying: { steps: [{ shelfSetpointC: -25, rampRateCPerMin: 0.5, holdMin: 1800, chamberPressurePa: 10, shelfToleranceC: 2, pressureMinPa: 8, pressureMaxPa: 12 }] },
					secondaryDrying: { steps: [{ shelfSetpointC: 30, rampRateCPerMin: 0.2, holdMin: 360, chamberPressurePa: 10, shelfToleranceC: 2, pressureMinPa: 8, pressureMaxPa: 12 }] },
					product: { criticalTemperatureC: -30, criticalKind: 'collapse', marginC: 2 }
				}
			};
	}
}

export function makeStep(t: TemplateInput): StepInput {
	const key = freshKey(t, 'step');
	return { key, title: 'New step', instructions: '', roles: ['operator'], critical: false, mayRunOutOfOrder: false, equipment: [], materials: [], fields: [] };
}

export function makeSection(t: TemplateInput): SectionInput {
	const key = freshKey(t, 'section');
	const section: SectionInput = { key, title: 'New section', steps: [] };
	const probe: TemplateInput = { ...t, sections: [...t.sections, section] };
	section.steps.push(makeStep(probe));
	return section;
}

/** Moves item `i` of a list by `by` places (−1 up, +1 down), in place. */
export function moveItem<T>(list: T[], i: number, by: number): number {
	const j = i + by;
	if (j < 0 || j >= list.length) return i;
	const [item] = list.splice(i, 1);
	list.splice(j, 0, item);
	return j;
}
