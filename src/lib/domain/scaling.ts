/**
 * Calculations of a template: their order, their values for given entries, and the scaling of
 * a master to the batch size it is issued at (design.md, "The whole job", step 2: issuance
 * scales quantities by formula). Re-exported by $lib/domain/template.
 *
 * Intermediate values are never rounded: a formula that uses a calculated field gets its full
 * value. Each calculated field is reported (shown and judged) rounded to its own decimals
 * (limits.ts, "The rule"). A `targetFrom` limit takes the reported value of the field it names,
 * i.e. the target the operator sees.
 */
import type { Field, Limits, Template } from '$lib/schemas/template';
import { compileFormula, convertUnitValue, evaluateFormula, isSameDimension, normalizeUnit, type FormulaIssue, type UnitValue } from './formula';
import { checkValue, resolveBounds, roundHalfAwayFromZero, tightenBounds, type Bounds, type LimitStatus } from './limits';
import { percentOfTheoretical } from './statistics';
import type { TemplateIssue } from './template';

function referencesOfFormula(text: string): readonly string[] {
	const c = compileFormula(text);
	return c.ok ? c.value.references : [];
}

/** The names a field's formulas use (none for fields without formulas). */
export function listReferences(field: Field): string[] {
	if (field.kind === 'calculated') return [...referencesOfFormula(field.formula)];
	if (field.kind === 'yield') {
		return [...new Set([...(field.actualFormula ? referencesOfFormula(field.actualFormula) : []), ...referencesOfFormula(field.theoreticalFormula)])];
	}
	return [];
}

function formulaFields(t: Template): Field[] {
	return t.sections.flatMap((s) => s.steps.flatMap((st) => st.fields.filter((f) => f.kind === 'calculated' || f.kind === 'yield')));
}

/**
 * Calculated and yield fields in an order where every field comes after the calculated fields it
 * uses (earliest in the template first among equals). Fields in or behind a cycle are `blocked`.
 */
export function orderCalculations(t: Template): { order: string[]; blocked: string[] } {
	const fields = formulaFields(t);
	const calculated = new Set(fields.filter((f) => f.kind === 'calculated').map((f) => f.key));
	const deps = new Map(fields.map((f) => [f.key, new Set(listReferences(f).filter((r) => calculated.has(r)))]));
	const order: string[] = [];
	const done = new Set<string>();
	let progress = true;
	while (progress) {
		progress = false;
		for (const f of fields) {
			if (done.has(f.key)) continue;
			if ([...(deps.get(f.key) ?? [])].every((d) => done.has(d))) {
				order.push(f.key);
				done.add(f.key);
				progress = true;
				break; // restart from the top: the earliest ready field goes first
			}
		}
	}
	return { order, blocked: fields.filter((f) => !done.has(f.key)).map((f) => f.key) };
}

export interface CalculationInputs {
	/** The batch size the record is issued at (any unit of the header's dimension). */
	batchSize: UnitValue;
	/** Entered values by field key: numbers with their unit; for a repeated field, its mean. */
	entries: Readonly<Record<string, UnitValue>>;
}

export type Calculation =
	| { kind: 'calculated'; key: string; ok: true; value: UnitValue; reported: number; bounds: Bounds | null; status: LimitStatus | null }
	| {
			kind: 'yield';
			key: string;
			ok: true;
			actual: UnitValue;
			theoretical: UnitValue;
			percent: number;
			reported: number;
			bounds: Bounds;
			status: LimitStatus;
	  }
	| { kind: 'calculated' | 'yield'; key: string; ok: false; missing: string[]; issues: FormulaIssue[] };

/** batch_size (in the header's unit) and theoretical_yield scaled in proportion. */
function batchValues(t: Template, batchSize: UnitValue): { ratio: number; batch: UnitValue; theoretical: UnitValue } | string {
	const { batchSize: nominal, theoreticalYield } = t.header;
	if (!isSameDimension(batchSize.unit, nominal.unit)) return `a batch size in ${batchSize.unit || 'no unit'} does not fit ${nominal.unit || 'no unit'}`;
	const c = convertUnitValue(batchSize, nominal.unit);
	if (!c.ok) return c.issues[0].message;
	const ratio = c.value.value / nominal.value;
	return { ratio, batch: c.value, theoretical: { value: theoreticalYield.value * ratio, unit: normalizeUnit(theoreticalYield.unit) } };
}

function failure(kind: 'calculated' | 'yield', key: string, issues: FormulaIssue[]): Calculation {
	const missing = issues.filter((i) => i.code === 'missing-value' && i.at).map((i) => i.at as string);
	return { kind, key, ok: false, missing, issues };
}

/**
 * Evaluates every calculated and yield field that has its inputs. A field whose inputs are not
 * entered yet is returned with ok: false and the names it misses.
 */
export function evaluateCalculations(t: Template, inputs: CalculationInputs): Map<string, Calculation> {
	const out = new Map<string, Calculation>();
	const batch = batchValues(t, inputs.batchSize);
	if (typeof batch === 'string') throw new RangeError(batch);
	const scope: Record<string, UnitValue> = { ...inputs.entries, batch_size: batch.batch, theoretical_yield: batch.theoretical };
	const byKey = new Map(formulaFields(t).map((f) => [f.key, f]));
	const { order, blocked } = orderCalculations(t);
	for (const key of order) {
		const f = byKey.get(key);
		if (f?.kind === 'calculated') {
			delete scope[key]; // a calculated field is never taken from the entries
			const r = evaluateFormula(f.formula, scope, f.unit);
			if (!r.ok) {
				out.set(key, failure('calculated', key, r.issues));
				continue;
			}
			scope[key] = r.value;
			const reported = roundHalfAwayFromZero(r.value.value, f.decimals);
			const calc: Calculation = { kind: 'calculated', key, ok: true, value: r.value, reported, bounds: null, status: null };
			out.set(key, calc);
			if (f.limits) {
				calc.bounds = resolveLimits(f.limits, f, out);
				calc.status = calc.bounds ? checkValue(reported, calc.bounds) : null;
			}
		} else if (f?.kind === 'yield') {
			out.set(key, evaluateYield(t, f, scope));
		}
	}
	for (const key of blocked) {
		const f = byKey.get(key);
		if (f) out.set(key, failure(f.kind as 'calculated' | 'yield', key, [{ code: 'missing-value', message: 'the field is part of or depends on a cycle' }]));
	}
	return out;
}

function evaluateYield(t: Template, f: Extract<Field, { kind: 'yield' }>, scope: Record<string, UnitValue>): Calculation {
	let actual: UnitValue;
	if (f.actualFormula) {
		const a = evaluateFormula(f.actualFormula, scope, f.unit);
		if (!a.ok) return failure('yield', f.key, a.issues);
		actual = a.value;
	} else {
		const entered = scope[f.key];
		if (!entered) return failure('yield', f.key, [{ code: 'missing-value', message: `no value for ${f.key}`, at: f.key }]);
		const c = convertUnitValue(entered, f.unit);
		if (!c.ok) return failure('yield', f.key, c.issues);
		actual = c.value;
	}
	const th = evaluateFormula(f.theoreticalFormula, scope, f.unit);
	if (!th.ok) return failure('yield', f.key, th.issues);
	if (!(th.value.value > 0) || actual.value < 0) {
		return failure('yield', f.key, [{ code: 'not-finite', message: 'the theoretical yield must be positive and the actual yield not negative' }]);
	}
	const percent = percentOfTheoretical(actual.value, th.value.value);
	const reported = roundHalfAwayFromZero(percent, f.decimals);
	const limits = f.limits ?? t.header.theoreticalYield;
	const bounds = { min: limits.minPercent, max: limits.maxPercent };
	return { kind: 'yield', key: f.key, ok: true, actual, theoretical: th.value, percent, reported, bounds, status: checkValue(reported, bounds) };
}

/**
 * Bounds of a field's limits in its unit, tightened to the field's decimals (limits.ts,
 * tightenBounds: the same judgement for every value the field can hold). A `targetFrom` target
 * is the reported value of the calculated field it names, converted to this field's unit (to 12
 * significant digits, which drops binary noise of the conversion); null while that field has no
 * value.
 */
export function resolveLimits(
	limits: Limits,
	field: { unit: string; decimals: number },
	calculations: ReadonlyMap<string, Calculation>
): Bounds | null {
	if (limits.kind === 'range' || limits.targetFrom === undefined) return tightenBounds(resolveBounds(limits), field.decimals);
	const from = calculations.get(limits.targetFrom);
	if (!from || !from.ok || from.kind !== 'calculated') return null;
	let target = from.reported;
	if (normalizeUnit(from.value.unit) !== normalizeUnit(field.unit)) {
		const c = convertUnitValue({ value: from.reported, unit: from.value.unit }, field.unit);
		if (!c.ok) return null;
		target = Number(c.value.value.toPrecision(12));
	}
	return tightenBounds(resolveBounds(limits, target), field.decimals);
}

export interface ScaledMaterial {
	stepKey: string;
	itemCode: string;
	name: string;
	/** The amount from the material's `quantityFrom` field, reported (rounded) in its unit. */
	quantity: UnitValue | null;
}

/** A master scaled to one batch: what issuance stores beside the frozen snapshot. */
export interface ScaledTemplate {
	batchSize: UnitValue;
	ratio: number;
	theoreticalYield: UnitValue;
	/** Calculated fields that depend on batch values only, already evaluated. */
	calculations: Record<string, Calculation>;
	/** Resolved bounds of each field with limits (targetFrom resolved where possible). */
	bounds: Record<string, { limits?: Bounds; meanLimits?: Bounds }>;
	materials: ScaledMaterial[];
}

/** Scales a valid template to a batch size within its validated range. */
export function scaleTemplate(t: Template, batchSize: UnitValue): { ok: true; scaled: ScaledTemplate } | { ok: false; issues: TemplateIssue[] } {
	const refuse = (code: string, message: string) => ({ ok: false as const, issues: [{ path: ['batchSize'], code, message }] });
	if (!(batchSize.value > 0) || !Number.isFinite(batchSize.value)) return refuse('batch-size.not-positive', 'the batch size must be a positive number');
	const batch = batchValues(t, batchSize);
	if (typeof batch === 'string') return refuse('batch-size.unit', batch);
	const { min, max, unit } = t.header.batchSize;
	if ((min !== undefined && batch.batch.value < min) || (max !== undefined && batch.batch.value > max)) {
		return refuse('batch-size.outside', `the batch size must lie within ${min ?? '–'} … ${max ?? '–'} ${unit}`);
	}
	const calcs = evaluateCalculations(t, { batchSize, entries: {} });
	const calculations: Record<string, Calculation> = {};
	for (const [k, c] of calcs) if (c.ok && c.kind === 'calculated') calculations[k] = c;
	const bounds: ScaledTemplate['bounds'] = {};
	const materials: ScaledMaterial[] = [];
	for (const s of t.sections) {
		for (const st of s.steps) {
			for (const f of st.fields) {
				if (f.kind !== 'number' && f.kind !== 'calculated' && f.kind !== 'repeated') continue;
				const b: { limits?: Bounds; meanLimits?: Bounds } = {};
				const l = f.limits ? resolveLimits(f.limits, f, calcs) : null;
				if (l) b.limits = l;
				if (f.kind === 'repeated' && f.meanLimits) {
					const m = resolveLimits(f.meanLimits, f, calcs);
					if (m) b.meanLimits = m;
				}
				if (b.limits || b.meanLimits) bounds[f.key] = b;
			}
			for (const m of st.materials) {
				const c = m.quantityFrom ? calcs.get(m.quantityFrom) : undefined;
				const quantity = c?.ok && c.kind === 'calculated' ? { value: c.reported, unit: c.value.unit } : null;
				materials.push({ stepKey: st.key, itemCode: m.itemCode, name: m.name, quantity });
			}
		}
	}
	return { ok: true, scaled: { batchSize: batch.batch, ratio: batch.ratio, theoreticalYield: batch.theoretical, calculations, bounds, materials } };
}
