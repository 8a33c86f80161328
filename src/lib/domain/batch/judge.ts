/**
 * Judging a step's values against the frozen template: calculated fields computed from every
 * value recorded so far (this step's and earlier steps'), limits resolved (targets that come
 * from calculated fields included) and each field's verdict. The browser runs this as the
 * operator types; the server runs it again inside the unit of work. Pure, no I/O.
 */
import type { Field, Step, Template } from '$lib/schemas/template';
import { evaluateCalculations, resolveLimits, type Calculation } from '../scaling';
import { checkChoice, checkValue, checkYesNo, type Bounds } from '../limits';
import { assessReadings, type RepeatedAssessment } from '../statistics';
import type { UnitValue } from '../formula';
import type { StoredValue } from './values';

export type Verdict = 'within' | 'below' | 'above' | 'unacceptable' | 'none';

export interface FieldJudgement {
	key: string;
	verdict: Verdict;
	bounds: Bounds | null;
	/** For calculated and yield fields: the reported (rounded) value, in the field's unit or %. */
	reported?: number;
	unit?: string;
	repeated?: Pick<RepeatedAssessment, 'mean' | 'sd' | 'uniformity' | 'readings'>;
	/** A calculated field that cannot be computed yet, and what it waits for. */
	missing?: string[];
}

export interface StepJudgement {
	fields: Record<string, FieldJudgement>;
	/** Field keys outside their limits: these need a comment and raise a deviation. */
	outOfLimits: string[];
	calculations: Record<string, { reported: number; unit: string; value: number } | { missing: string[] }>;
}

/** The numbers formulas see: number and yield values in their field's unit, a repeated field's mean. */
export function formulaInputs(template: Template, values: ReadonlyMap<string, StoredValue>): Record<string, UnitValue> {
	const out: Record<string, UnitValue> = {};
	for (const f of allFields(template)) {
		const v = values.get(f.key);
		if (!v) continue;
		if (v.kind === 'number' && (f.kind === 'number' || f.kind === 'yield')) out[f.key] = { value: v.value, unit: f.unit };
		if (v.kind === 'repeated' && f.kind === 'repeated' && v.values.length > 0) out[f.key] = { value: v.values.reduce((a, b) => a + b, 0) / v.values.length, unit: f.unit };
	}
	return out;
}

export function allFields(template: Template): Field[] {
	return template.sections.flatMap((s) => s.steps.flatMap((st) => st.fields));
}

export function findStep(template: Template, stepKey: string): Step | null {
	for (const s of template.sections) for (const st of s.steps) if (st.key === stepKey) return st;
	return null;
}

function verdictOf(status: string | null | undefined): Verdict {
	if (status === 'below' || status === 'above' || status === 'unacceptable' || status === 'within') return status;
	return 'none';
}

/**
 * Judges one step. `values` holds every current value of the batch with this step's new ones
 * laid over them (so a correction is judged with the corrected values).
 */
export function judgeStep(template: Template, batchSize: UnitValue, step: Step, values: ReadonlyMap<string, StoredValue>): StepJudgement {
	const calcs: Map<string, Calculation> = evaluateCalculations(template, { batchSize, entries: formulaInputs(template, values) });
	const fields: Record<string, FieldJudgement> = {};
	const calculations: StepJudgement['calculations'] = {};
	for (const f of step.fields) {
		const v = values.get(f.key);
		let j: FieldJudgement = { key: f.key, verdict: 'none', bounds: null };
		if (f.kind === 'number') {
			const bounds = f.limits ? resolveLimits(f.limits, f, calcs) : null;
			j = { key: f.key, verdict: v?.kind === 'number' && bounds ? checkValue(v.value, bounds) : 'none', bounds };
		} else if (f.kind === 'calculated' || f.kind === 'yield') {
			const c = calcs.get(f.key);
			if (c?.ok && c.kind === 'calculated') {
				j = { key: f.key, verdict: verdictOf(c.status), bounds: c.bounds, reported: c.reported, unit: f.unit };
				calculations[f.key] = { reported: c.reported, unit: f.unit, value: c.value.value };
			} else if (c?.ok && c.kind === 'yield') {
				j = { key: f.key, verdict: verdictOf(c.status), bounds: c.bounds, reported: c.reported, unit: '%' };
				calculations[f.key] = { reported: c.reported, unit: '%', value: c.percent };
			} else {
				const missing = c && !c.ok ? c.missing : [];
				j = { key: f.key, verdict: 'none', bounds: null, missing };
				calculations[f.key] = { missing };
			}
		} else if (f.kind === 'repeated') {
			const limits = f.limits ? resolveLimits(f.limits, f, calcs) ?? undefined : undefined;
			const meanLimits = f.meanLimits ? resolveLimits(f.meanLimits, f, calcs) ?? undefined : undefined;
			if (v?.kind === 'repeated') {
				const a = assessReadings(f, v.values, { limits, meanLimits });
				const verdict: Verdict = a.outOfLimits ? 'unacceptable' : 'within';
				j = { key: f.key, verdict, bounds: limits ?? null, repeated: { mean: a.mean, sd: a.sd, uniformity: a.uniformity, readings: a.readings } };
			} else j = { key: f.key, verdict: 'none', bounds: limits ?? null };
		} else if (f.kind === 'choice' && v?.kind === 'choice') {
			j = { key: f.key, verdict: checkChoice(v.value, f.acceptable), bounds: null };
		} else if (f.kind === 'check' && v?.kind === 'check') {
			j = { key: f.key, verdict: checkYesNo(v.value, f.expected), bounds: null };
		}
		fields[f.key] = j;
	}
	const outOfLimits = Object.values(fields)
		.filter((j) => j.verdict === 'below' || j.verdict === 'above' || j.verdict === 'unacceptable')
		.map((j) => j.key);
	return { fields, outOfLimits, calculations };
}
