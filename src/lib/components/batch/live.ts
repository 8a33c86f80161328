/**
 * The browser's live check of a step as it is filled in: the same readers and the same judgement
 * as the server ($lib/domain/batch), against the frozen template and the values in force. The
 * server checks again when the step is signed; this only tells the person early.
 */
import type { Field, Template } from '$lib/schemas/template';
import { findStep, judgeStep, type StepJudgement } from '$lib/domain/batch/judge';
import { isEnteredField, readPlainValue, type StoredValue } from '$lib/domain/batch/values';
import type { Preferences } from '$lib/domain/batch/preferences';
import { fromCanonical, isUnit } from '$lib/domain/units';
import { formatFixed } from '$lib/domain/limits';
import { preferredUnitOf } from './format';

export interface LiveCheck {
	problems: Map<string, string>;
	outOfLimits: string[];
	judgement: StepJudgement | null;
}

export function liveCheck(
	template: Template,
	batchSize: { value: number; unit: string },
	stepKey: string,
	steps: { key: string; values: Record<string, StoredValue> }[],
	raw: Record<string, unknown>
): LiveCheck {
	const step = findStep(template, stepKey);
	const problems = new Map<string, string>();
	if (!step) return { problems, outOfLimits: [], judgement: null };
	const merged = new Map<string, StoredValue>();
	for (const s of steps) if (s.key !== stepKey) for (const [k, v] of Object.entries(s.values)) merged.set(k, v);
	const now = new Date();
	for (const f of step.fields) {
		if (!isEnteredField(f)) continue;
		const r = raw[f.key];
		const blank = r === undefined || r === null || r === '' || (Array.isArray(r) && r.every((x) => x === ''));
		if (blank) {
			if (f.required) problems.set(f.key, '');
			continue;
		}
		if (f.kind === 'material' || f.kind === 'equipment' || f.kind === 'attachment' || f.kind === 'recipe') continue;
		const read = readPlainValue(f, r, { now });
		if (!read.ok) problems.set(f.key, read.problem.message);
		else if (read.value !== undefined) merged.set(f.key, read.value);
	}
	let judgement: StepJudgement | null = null;
	try {
		judgement = judgeStep(template, batchSize, step, merged);
	} catch {
		judgement = null;
	}
	// Only fields with a problem to show keep a message; empty required ones block signing quietly.
	return { problems, outOfLimits: judgement?.outOfLimits ?? [], judgement };
}

/** The form values that reproduce a stored entry (to start a correction from what is recorded). */
export function rawFromStored(fields: Field[], values: Record<string, StoredValue>, prefs: Preferences): Record<string, unknown> {
	const out: Record<string, unknown> = {};
	for (const f of fields) {
		const v = values[f.key];
		if (!v) continue;
		if (v.kind === 'number') {
			const unit = 'unit' in f ? preferredUnitOf(f.unit, prefs) : v.unit;
			if (v.unit === unit || !v.canonical || !isUnit(unit)) out[f.key] = { value: v.text, unit: v.unit };
			else out[f.key] = { value: formatFixed(fromCanonical(v.canonical.value, unit), 'decimals' in f ? f.decimals : 0), unit };
		} else if (v.kind === 'repeated') out[f.key] = [...v.texts];
		else if (v.kind === 'material') out[f.key] = v.lotNumber;
		else if (v.kind === 'equipment') out[f.key] = v.code;
		else if (v.kind === 'attachment') out[f.key] = v.attachmentId;
		else if (v.kind === 'cycle-run') out[f.key] = v.runId;
		else if (v.kind === 'choice') out[f.key] = v.value.length === 1 ? v.value[0] : v.value;
		else out[f.key] = v.value;
	}
	return out;
}
