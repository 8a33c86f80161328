/**
 * Alignment of the recipe's steps with the actual run, and the comparison of planned and
 * measured ramp rates, hold times and phase durations.
 *
 * Each recipe step is found inside its detected phase in order: its ramp by locateRamp (10–90 %
 * reference levels between the previous and this setpoint), its hold from the end of that ramp
 * to the start of the next step's ramp (or the end of the phase). Steps whose setpoint differs
 * from the previous one by less than minRampC have no ramp. Once one step of a phase is not
 * found (the shelf never reached its setpoint), the rest of that phase is not aligned and is
 * left unchecked for excursions; a warning says so.
 */
import { listRecipePhases, planPhaseDurations, type PhaseName, type Recipe, type RecipeStep } from './recipe';
import type { PhaseInterval } from './phases';
import { searchTimeIndex } from './series';
import { locateRamp } from './signal';

export interface StepAlignment {
	phase: PhaseName;
	/** index within the phase */
	step: number;
	spec: RecipeStep;
	fromC: number;
	toC: number;
	found: boolean;
	/** ramp start/end (extrapolated 10–90 % line), s; equal when the step has no ramp */
	rampStartS: number | null;
	rampEndS: number | null;
	/** measured ramp rate, °C/min; null when there is no ramp */
	rampRateCPerMin: number | null;
	/** first time the shelf is within the step's tolerance after the ramp, s */
	bandEntryS: number | null;
	/** end of the hold: the next step's ramp start or the end of the phase, s */
	holdEndS: number | null;
}

export interface StepOptions {
	sustainS: number;
	minRampC: number;
}

export function alignSteps(
	t: Float64Array,
	shelf: Float64Array | null,
	phases: PhaseInterval[],
	recipe: Recipe,
	options: StepOptions
): { steps: StepAlignment[]; warnings: string[] } {
	const steps: StepAlignment[] = [];
	const warnings: string[] = [];
	const n = t.length;
	const dt = n > 1 ? (t[n - 1] - t[0]) / (n - 1) : 0;
	let prevC = recipe.loadingShelfC;
	for (const { name, steps: specs } of listRecipePhases(recipe)) {
		const phase = phases.find((p) => p.name === name);
		const aligned: StepAlignment[] = specs.map((spec, i) => {
			const fromC = i === 0 ? prevC : specs[i - 1].shelfSetpointC;
			return {
				phase: name,
				step: i,
				spec,
				fromC,
				toC: spec.shelfSetpointC,
				found: false,
				rampStartS: null,
				rampEndS: null,
				rampRateCPerMin: null,
				bandEntryS: null,
				holdEndS: null
			};
		});
		prevC = specs[specs.length - 1].shelfSetpointC;
		steps.push(...aligned);
		if (!phase) {
			warnings.push(`${name}: in the recipe but not found in the log`);
			continue;
		}
		if (!shelf) continue;
		// Search a little before the detected start: the extrapolated ramp start that defines a
		// phase boundary can lie before the last sample still at the previous level.
		const margin = Math.max(options.sustainS, 3 * dt);
		let cursor = searchTimeIndex(t, phase.startS - margin);
		const end = Math.min(n, searchTimeIndex(t, phase.endS) + 1);
		for (const a of aligned) {
			if (Math.abs(a.toC - a.fromC) < options.minRampC) {
				const at = a.step === 0 ? phase.startS : (aligned[a.step - 1].bandEntryS ?? phase.startS);
				a.found = true;
				a.rampStartS = at;
				a.rampEndS = at;
				a.bandEntryS = at;
				continue;
			}
			const ramp = locateRamp(t, shelf, cursor, end, a.fromC, a.toC, options.sustainS);
			if (!ramp) {
				// The shelf may already be at this setpoint (e.g. vials loaded onto a shelf that was
				// pre-cooled to the first setpoint): then the step simply has no ramp.
				let k = cursor;
				while (k < end && Number.isNaN(shelf[k])) k++;
				if (k < end && Math.abs(shelf[k] - a.toC) <= a.spec.shelfToleranceC) {
					a.found = true;
					a.rampStartS = a.rampEndS = a.bandEntryS = Math.max(t[k], phase.startS);
					continue;
				}
				warnings.push(
					`${name} step ${a.step + 1}: the shelf did not reach ${a.toC} °C; the rest of ${name} was not checked`
				);
				break;
			}
			a.found = true;
			a.rampStartS = a.step === 0 ? Math.max(ramp.startS, phase.startS) : ramp.startS;
			a.rampEndS = ramp.endS;
			a.rampRateCPerMin = ramp.rateCPerMin;
			let k = ramp.i90;
			while (k < end && !(Math.abs(shelf[k] - a.toC) <= a.spec.shelfToleranceC)) k++;
			a.bandEntryS = k < end ? Math.max(t[k], ramp.endS) : ramp.endS;
			cursor = ramp.i90;
		}
		aligned.forEach((a, i) => {
			if (!a.found) return;
			const next = aligned[i + 1];
			a.holdEndS = next && next.found ? (next.rampStartS as number) : next ? null : phase.endS;
		});
	}
	return { steps, warnings };
}

export interface ComparisonOptions {
	/** ramp rate deviation that is reported, % of the planned rate */
	rampTolerancePct: number;
	/** hold time deviation that is reported: the larger of these two */
	holdToleranceMin: number;
	holdTolerancePct: number;
	/** phase duration deviation that is reported: the larger of these two */
	durationToleranceMin: number;
	durationTolerancePct: number;
}

export interface PhaseComparison {
	name: PhaseName;
	plannedS: number;
	actualS: number | null;
}

function formatNumber(x: number, digits = 1): string {
	return x.toFixed(digits);
}

/**
 * Planned vs actual phase durations and per-step ramp rates and holds; returns the comparison
 * and a warning for every difference beyond the tolerances. When the log ends without a
 * backfill, its last phase is reported as cut short (if shorter than planned) and the hold in
 * progress is not judged.
 */
export function compareWithRecipe(
	phases: PhaseInterval[],
	steps: StepAlignment[],
	recipe: Recipe,
	backfillS: number | null,
	options: ComparisonOptions
): { phases: PhaseComparison[]; warnings: string[] } {
	const warnings: string[] = [];
	const planned = planPhaseDurations(recipe);
	const out: PhaseComparison[] = [];
	// Without a backfill the log ended during its last phase: that phase (and its last hold) is
	// cut short, which is reported as such, not as a deviation from the plan.
	const openPhase = backfillS === null ? phases[phases.length - 1]?.name : undefined;
	for (const { name } of listRecipePhases(recipe)) {
		const plannedS = planned[name] ?? 0;
		const phase = phases.find((p) => p.name === name);
		const actualS = phase ? phase.endS - phase.startS : null;
		out.push({ name, plannedS, actualS });
		if (actualS === null) continue;
		const tol = Math.max(options.durationToleranceMin * 60, (options.durationTolerancePct / 100) * plannedS);
		const cutShort = name === openPhase && actualS < plannedS;
		if (cutShort) {
			const [a, p] = [formatNumber(actualS / 60), formatNumber(plannedS / 60)];
			warnings.push(`${name}: the log ends after ${a} min of ${p} min planned`);
		} else if (Math.abs(actualS - plannedS) > tol) {
			const [a, p] = [formatNumber(actualS / 60), formatNumber(plannedS / 60)];
			warnings.push(`${name}: lasted ${a} min, planned ${p} min`);
		}
	}
	const openSteps = steps.filter((s) => s.found && s.phase === openPhase);
	const lastOpenStep = openSteps[openSteps.length - 1];
	for (const s of steps) {
		if (!s.found) continue;
		const label = `${s.phase} step ${s.step + 1}`;
		const plannedRate = s.spec.rampRateCPerMin;
		if (s.rampRateCPerMin !== null) {
			const dev = (Math.abs(s.rampRateCPerMin - plannedRate) / plannedRate) * 100;
			if (dev > options.rampTolerancePct) {
				const [a, p] = [formatNumber(s.rampRateCPerMin, 2), formatNumber(plannedRate, 2)];
				warnings.push(`${label}: ramp ${a} °C/min, planned ${p} °C/min`);
			}
		}
		if (s.holdEndS === null || s.rampEndS === null) continue;
		const holdMin = (s.holdEndS - s.rampEndS) / 60;
		const tolMin = Math.max(options.holdToleranceMin, (options.holdTolerancePct / 100) * s.spec.holdMin);
		if (s === lastOpenStep && holdMin < s.spec.holdMin) continue;
		if (Math.abs(holdMin - s.spec.holdMin) > tolMin) {
			warnings.push(`${label}: hold ${formatNumber(holdMin)} min, planned ${formatNumber(s.spec.holdMin)} min`);
		}
	}
	return { phases: out, warnings };
}
