/**
 * The freeze-drying recipe held in a master batch record (design.md, "The whole job", step 4)
 * and the planned setpoint trajectory it implies.
 *
 * Structure, in ISA-88 terms: the recipe's procedure has four phases in fixed order —
 * freezing, optional annealing, primary drying, secondary drying — and each phase is a list of
 * steps. A step ramps the shelf from the previous setpoint to its own at a given rate and then
 * holds it for a given time, at a chamber pressure setpoint (null = no vacuum, i.e. the chamber
 * at atmospheric pressure, as during freezing). Each step carries its acceptable ranges: shelf
 * setpoint ± tolerance and chamber pressure min…max.
 *
 * Units are the canonical ones (../units.ts): °C, Pa, minutes only where a recipe is written in
 * minutes (ramp rate °C/min, hold min), because that is how recipes are authored and read.
 *
 * The schema is self-contained (it imports only zod) so a master-record template schema can
 * embed `recipeSchema` as one field.
 */
import { z } from 'zod';

export const PHASE_NAMES = ['freezing', 'annealing', 'primary-drying', 'secondary-drying'] as const;
export type PhaseName = (typeof PHASE_NAMES)[number];

/** Recipe object keys in procedure order, aligned with PHASE_NAMES. */
export const PHASE_KEYS = ['freezing', 'annealing', 'primaryDrying', 'secondaryDrying'] as const;
export type PhaseKey = (typeof PHASE_KEYS)[number];

// Shelf fluids of freeze dryers work from about −80 °C to +80 °C; the bounds below only reject
// typing errors (a missing minus sign on −450 °C), they are not process limits.
const shelfC = z.number().min(-100).max(150);

export const recipeStepSchema = z
	.object({
		/** shelf temperature setpoint, °C */
		shelfSetpointC: shelfC,
		/** ramp rate from the previous setpoint to this one, °C/min (> 0) */
		rampRateCPerMin: z.number().positive().max(100),
		/** hold at the setpoint after the ramp, min */
		holdMin: z.number().nonnegative(),
		/** chamber pressure setpoint, Pa; null = chamber not evacuated (atmospheric) */
		chamberPressurePa: z.number().positive().max(200_000).nullable(),
		/** acceptable shelf range: setpoint ± tolerance, °C */
		shelfToleranceC: z.number().positive().max(50),
		/** acceptable chamber pressure range, Pa; both null exactly when the setpoint is null */
		pressureMinPa: z.number().nonnegative().nullable(),
		pressureMaxPa: z.number().positive().nullable()
	})
	.superRefine((s, ctx) => {
		const hasSetpoint = s.chamberPressurePa !== null;
		const hasMin = s.pressureMinPa !== null;
		const hasMax = s.pressureMaxPa !== null;
		if (hasSetpoint !== hasMin || hasSetpoint !== hasMax) {
			ctx.addIssue({
				code: 'custom',
				message: 'pressure range is required with a pressure setpoint and only then',
				path: ['pressureMinPa']
			});
			return;
		}
		if (hasSetpoint) {
			const p = s.chamberPressurePa as number;
			const lo = s.pressureMinPa as number;
			const hi = s.pressureMaxPa as number;
			if (!(lo <= p && p <= hi)) {
				ctx.addIssue({
					code: 'custom',
					message: 'pressure setpoint must lie within pressureMinPa … pressureMaxPa',
					path: ['chamberPressurePa']
				});
			}
		}
	});
export type RecipeStep = z.infer<typeof recipeStepSchema>;

export const recipePhaseSchema = z.object({
	steps: z.array(recipeStepSchema).min(1)
});
export type RecipePhase = z.infer<typeof recipePhaseSchema>;

export const productLimitSchema = z.object({
	/** the product's critical temperature, °C (collapse, eutectic or Tg′ of the formulation) */
	criticalTemperatureC: z.number().min(-100).max(50),
	/** what the critical temperature is, for the report */
	criticalKind: z.enum(['collapse', 'eutectic', 'glass-transition']),
	/** required distance of the product temperature below the critical temperature, °C */
	marginC: z.number().nonnegative().max(50)
});
export type ProductLimit = z.infer<typeof productLimitSchema>;

function requireVacuum(phase: RecipePhase, ctx: z.RefinementCtx, key: PhaseKey): void {
	phase.steps.forEach((s, i) => {
		if (s.chamberPressurePa === null) {
			ctx.addIssue({
				code: 'custom',
				message: 'drying steps need a chamber pressure setpoint',
				path: [key, 'steps', i, 'chamberPressurePa']
			});
		}
	});
}

export const recipeSchema = z
	.object({
		/** shelf temperature when the vials are loaded, °C: where the planned profile starts */
		loadingShelfC: shelfC,
		freezing: recipePhaseSchema,
		/** optional annealing: warm to the annealing setpoint, hold, and re-freeze (its steps) */
		annealing: recipePhaseSchema.nullable(),
		primaryDrying: recipePhaseSchema,
		secondaryDrying: recipePhaseSchema,
		product: productLimitSchema
	})
	.superRefine((r, ctx) => {
		requireVacuum(r.primaryDrying, ctx, 'primaryDrying');
		requireVacuum(r.secondaryDrying, ctx, 'secondaryDrying');
		// Freezing and annealing run at atmospheric pressure: phase detection keys primary drying
		// to the vacuum pull-down (analysis/phases.ts).
		for (const key of ['freezing', 'annealing'] as const) {
			r[key]?.steps.forEach((s, i) => {
				if (s.chamberPressurePa !== null) {
					ctx.addIssue({
						code: 'custom',
						message: 'freezing and annealing run at atmospheric pressure (null setpoint)',
						path: [key, 'steps', i, 'chamberPressurePa']
					});
				}
			});
		}
	});
export type Recipe = z.infer<typeof recipeSchema>;

/** The phases a recipe actually has, in order, with their steps. */
export function listRecipePhases(recipe: Recipe): { name: PhaseName; steps: RecipeStep[] }[] {
	const out: { name: PhaseName; steps: RecipeStep[] }[] = [];
	PHASE_KEYS.forEach((key, i) => {
		const phase = recipe[key];
		if (phase) out.push({ name: PHASE_NAMES[i], steps: phase.steps });
	});
	return out;
}

export interface ProfilePoint {
	/** seconds from the planned cycle start */
	tS: number;
	shelfC: number;
	/** chamber pressure setpoint, Pa; null = atmospheric */
	pressurePa: number | null;
	phase: PhaseName;
	/** index of the step within its phase */
	step: number;
	/** which part of the step this vertex begins ('end' marks the final vertex of the profile) */
	segment: 'ramp' | 'hold' | 'end';
}

/**
 * The planned setpoint trajectory as polyline vertices, for chart overlays and for planned
 * durations. The shelf is linear between vertices; the pressure setpoint is a step function
 * that takes the value of the step being executed (it changes at the start of each step, where
 * two vertices share one time). Time 0 is the start of freezing from `loadingShelfC`.
 *
 * Assumptions, stated because controllers differ: a ramp starts as soon as the previous hold
 * ends (no wait for the pressure to reach its setpoint) and a hold lasts exactly holdMin (no
 * guaranteed-soak extension). The pull-down at the start of primary drying is therefore
 * instantaneous in the plan; write an explicit first primary step (hold at the freezing
 * setpoint) when the recipe waits for vacuum.
 */
export function expectedProfile(recipe: Recipe): ProfilePoint[] {
	const points: ProfilePoint[] = [];
	let t = 0;
	let shelf = recipe.loadingShelfC;
	for (const { name, steps } of listRecipePhases(recipe)) {
		steps.forEach((s, i) => {
			points.push({ tS: t, shelfC: shelf, pressurePa: s.chamberPressurePa, phase: name, step: i, segment: 'ramp' });
			t += (Math.abs(s.shelfSetpointC - shelf) / s.rampRateCPerMin) * 60;
			shelf = s.shelfSetpointC;
			points.push({ tS: t, shelfC: shelf, pressurePa: s.chamberPressurePa, phase: name, step: i, segment: 'hold' });
			t += s.holdMin * 60;
		});
	}
	const last = points[points.length - 1];
	points.push({ ...last, tS: t, segment: 'end' });
	return points;
}

export interface PlannedStep {
	phase: PhaseName;
	step: number;
	fromC: number;
	toC: number;
	rampS: number;
	holdS: number;
	startS: number;
}

/** Planned steps with their start times and ramp/hold durations (s), in execution order. */
export function planSteps(recipe: Recipe): PlannedStep[] {
	const out: PlannedStep[] = [];
	let t = 0;
	let shelf = recipe.loadingShelfC;
	for (const { name, steps } of listRecipePhases(recipe)) {
		steps.forEach((s, i) => {
			const rampS = (Math.abs(s.shelfSetpointC - shelf) / s.rampRateCPerMin) * 60;
			out.push({ phase: name, step: i, fromC: shelf, toC: s.shelfSetpointC, rampS, holdS: s.holdMin * 60, startS: t });
			t += rampS + s.holdMin * 60;
			shelf = s.shelfSetpointC;
		});
	}
	return out;
}

/** Planned duration of each phase present in the recipe, s. */
export function planPhaseDurations(recipe: Recipe): Partial<Record<PhaseName, number>> {
	const out: Partial<Record<PhaseName, number>> = {};
	for (const s of planSteps(recipe)) out[s.phase] = (out[s.phase] ?? 0) + s.rampS + s.holdS;
	return out;
}

/** Planned shelf and pressure setpoints at time tS of the plan (clamped to the profile ends). */
export function evaluateProfile(
	profile: readonly ProfilePoint[],
	tS: number
): { shelfC: number; pressurePa: number | null; phase: PhaseName } {
	if (tS <= profile[0].tS) return profile[0];
	const last = profile[profile.length - 1];
	if (tS >= last.tS) return last;
	let lo = 0;
	let hi = profile.length - 1;
	while (hi - lo > 1) {
		const mid = (lo + hi) >> 1;
		if (profile[mid].tS <= tS) lo = mid;
		else hi = mid;
	}
	const a = profile[lo];
	const b = profile[hi];
	const f = b.tS > a.tS ? (tS - a.tS) / (b.tS - a.tS) : 0;
	return { shelfC: a.shelfC + f * (b.shelfC - a.shelfC), pressurePa: a.pressurePa, phase: a.phase };
}
