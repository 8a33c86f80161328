/**
 * Phase detection on the actual run: where freezing, annealing, primary and secondary drying
 * really began and ended, from the chamber pressure and the shelf temperature.
 *
 * Rules (each a property of the freeze-drying process, not of any one dryer):
 * - Freezing (and annealing) run at atmospheric pressure; primary drying begins with the vacuum
 *   pull-down. The pull-down is the start of the fall that leads into a sustained vacuum
 *   (pressure > 0 and ≤ the vacuum threshold for at least sustainS). The Pirani gauge is
 *   preferred for this because capacitance manometers are often off scale, or read 0, at
 *   atmospheric pressure (lyophilization.md, "Real cycle logs"); a reading ≤ 0 never counts as
 *   vacuum. Where the gauge reads 0 above its range, the pull-down is seen only from the moment
 *   it comes into range (minutes late): one more reason to prefer the Pirani.
 * - Drying ends with the backfill: the first sustained loss of vacuum after the pull-down
 *   (short pressure-rise tests do not last sustainS).
 * - Secondary drying begins where the shelf starts its ramp from the last primary-drying
 *   setpoint to the first secondary-drying setpoint (with a recipe), or the ramp into the first
 *   warm hold (≥ warmShelfC) under vacuum (without a recipe).
 * - Annealing begins where the shelf starts to warm from the final freezing setpoint toward the
 *   annealing setpoint (recipe), or where it rises by ≥ annealRiseC above a cold hold and falls
 *   back before the pull-down (no recipe). It lasts until the pull-down (its steps include the
 *   re-freeze).
 */
import { listRecipePhases, planPhaseDurations, type PhaseName, type Recipe } from './recipe';
import { combineChannels, type CycleSeries } from './series';
import { computeMedian, locateRamp, segmentShelf } from './signal';

export interface PhaseInterval {
	name: PhaseName;
	startS: number;
	endS: number;
}

export interface PhaseOptions {
	/** vacuum threshold, Pa; default recipe ? max(100, 5 × highest drying pressureMaxPa) : 100 */
	vacuumThresholdPa?: number;
	/** a state must last this long to count (vacuum, backfill, level crossings), s */
	sustainS: number;
	/** without a recipe: a hold at or above this shelf temperature under vacuum is secondary drying, °C */
	warmShelfC: number;
	/** without a recipe: warming above a cold hold by this much before the pull-down is annealing, °C */
	annealRiseC: number;
	/** setpoint changes smaller than this are treated as "no ramp", °C */
	minRampC: number;
}

export interface PhaseDetection {
	phases: PhaseInterval[];
	/** start of the vacuum pull-down, s (null: no pull-down in the log) */
	pullDownS: number | null;
	/** start of the backfill, s (null: the log ends under vacuum) */
	backfillS: number | null;
	/** the threshold actually used, Pa */
	vacuumThresholdPa: number;
	warnings: string[];
}

export function chooseVacuumThreshold(recipe: Recipe | null, override?: number): number {
	if (override !== undefined) return override;
	if (!recipe) return 100;
	let maxPa = 0;
	for (const { steps } of listRecipePhases(recipe)) {
		for (const s of steps) if (s.pressureMaxPa !== null) maxPa = Math.max(maxPa, s.pressureMaxPa);
	}
	return Math.max(100, 5 * maxPa);
}

/** The gauge used for the vacuum state, in order of preference. */
export function selectVacuumSignal(series: CycleSeries): Float64Array | null {
	return (
		combineChannels(series, 'pirani', 'mean') ??
		combineChannels(series, 'manometer', 'mean') ??
		combineChannels(series, 'setpoint-pressure', 'mean')
	);
}

/** 1 vacuum, 0 not vacuum, −1 unknown (NaN). */
function classifyVacuum(x: number, thr: number): number {
	if (Number.isNaN(x)) return -1;
	return x > 0 && x <= thr ? 1 : 0;
}

/** First index ≥ from where the state equals `want` and no opposite state occurs for sustainS. */
function findSustainedState(
	t: Float64Array,
	p: Float64Array,
	from: number,
	thr: number,
	want: number,
	sustainS: number
): number {
	const n = t.length;
	let k = from;
	while (k < n) {
		if (classifyVacuum(p[k], thr) !== want) {
			k++;
			continue;
		}
		let j = k + 1;
		let broken = -1;
		for (; j < n && t[j] - t[k] < sustainS; j++) {
			const c = classifyVacuum(p[j], thr);
			if (c === 1 - want) {
				broken = j;
				break;
			}
		}
		if (broken < 0) return k;
		k = broken + 1;
	}
	return -1;
}

/**
 * Start of the pull-down: the last reading before the sustained vacuum at k that is still at
 * ≥ 90 % of the highest reading of the hour before (the atmospheric level as this gauge sees
 * it: a saturated Pirani, or the full scale of a manometer that reads 0 above its range).
 * A level test, not a walk down the slope, so noise on the atmospheric plateau cannot move it.
 */
function findPullDownStart(t: Float64Array, p: Float64Array, k: number): number {
	let pmax = -Infinity;
	for (let j = k; j >= 0 && t[k] - t[j] <= 3600; j--) if (p[j] > pmax) pmax = p[j];
	for (let j = k - 1; j >= 0 && t[k] - t[j] <= 3600; j--) if (p[j] >= 0.9 * pmax) return j;
	return k;
}

/**
 * Start of the backfill: the last reading before the sustained loss of vacuum at b that is
 * still ≤ 2 × the median vacuum level of the 30 min before b.
 */
function findBackfillStart(t: Float64Array, p: Float64Array, b: number): number {
	const base: number[] = [];
	for (let j = b - 1; j >= 0 && t[b] - t[j] <= 1800; j--) if (p[j] > 0) base.push(p[j]);
	const level = computeMedian(base);
	if (!Number.isFinite(level)) return b;
	let j = b - 1;
	while (j > 0 && !(p[j] <= 2 * level)) j--;
	return Math.max(0, j);
}

export function detectPhases(
	series: CycleSeries,
	shelf: Float64Array | null,
	recipe: Recipe | null,
	options: PhaseOptions
): PhaseDetection {
	const { t } = series;
	const n = t.length;
	const warnings: string[] = [];
	const thr = chooseVacuumThreshold(recipe, options.vacuumThresholdPa);
	const none: PhaseDetection = { phases: [], pullDownS: null, backfillS: null, vacuumThresholdPa: thr, warnings };
	if (n === 0) {
		warnings.push('the log is empty');
		return none;
	}
	const t0 = t[0];
	const tEnd = t[n - 1];
	const p = selectVacuumSignal(series);
	let pullIdx = -1;
	let backIdx = -1;
	if (!p) {
		warnings.push('no pressure channel: drying phases cannot be told from freezing');
	} else {
		const vac = findSustainedState(t, p, 0, thr, 1, options.sustainS);
		if (vac < 0) {
			warnings.push(`no sustained vacuum (≤ ${thr} Pa) in the log: no drying phases detected`);
		} else {
			pullIdx = findPullDownStart(t, p, vac);
			const back = findSustainedState(t, p, vac, thr, 0, options.sustainS);
			if (back >= 0) backIdx = findBackfillStart(t, p, back);
			if (pullIdx === 0 && classifyVacuum(p[0], thr) === 1) {
				warnings.push('the log starts under vacuum: freezing is not in the log');
			}
		}
	}
	const pullDownS = pullIdx >= 0 ? t[pullIdx] : null;
	const backfillS = backIdx >= 0 ? t[backIdx] : null;
	const atmEndS = pullDownS ?? tEnd;
	const dryEndS = backfillS ?? tEnd;
	const atmEndIdx = pullIdx >= 0 ? pullIdx : n;
	const dryEndIdx = backIdx >= 0 ? backIdx : n;

	let annealS: number | null = null;
	let secondaryS: number | null = null;
	if (!shelf) {
		warnings.push('no shelf temperature channel: annealing and secondary drying not detected from the shelf');
	}
	if (recipe) {
		const phases = listRecipePhases(recipe);
		const last = (name: PhaseName) => phases.find((x) => x.name === name)?.steps.at(-1)?.shelfSetpointC;
		const first = (name: PhaseName) => phases.find((x) => x.name === name)?.steps[0]?.shelfSetpointC;
		if (recipe.annealing && shelf && atmEndIdx > 0) {
			const from = last('freezing') as number;
			const to = first('annealing') as number;
			const ramp =
				Math.abs(to - from) >= options.minRampC
					? locateRamp(t, shelf, 0, atmEndIdx, from, to, options.sustainS)
					: null;
			if (ramp) annealS = Math.max(t0, ramp.startS);
			else warnings.push('annealing is in the recipe but no warming ramp to the annealing setpoint was found');
		}
		if (pullIdx >= 0) {
			const from = last('primary-drying') as number;
			const to = first('secondary-drying') as number;
			const ramp =
				shelf && Math.abs(to - from) >= options.minRampC
					? locateRamp(t, shelf, pullIdx, dryEndIdx, from, to, options.sustainS)
					: null;
			if (ramp) {
				secondaryS = Math.max(pullDownS as number, ramp.startS);
			} else {
				const planned = (pullDownS as number) + (planPhaseDurations(recipe)['primary-drying'] ?? 0);
				// (when the plan's secondary start lies beyond the data, the log ended in primary
				// drying; alignSteps reports secondary drying as missing)
				if (planned < dryEndS) {
					secondaryS = planned;
					warnings.push(
						'no shelf ramp from primary to secondary drying found: secondary drying start taken from the recipe timing'
					);
				}
			}
		}
	} else if (shelf) {
		const segments = segmentShelf(t, shelf, 0, n);
		const holds = segments.filter((s) => s.kind === 'hold');
		// Annealing: a warm hold between two colder ones, all before the pull-down.
		let coldest = Infinity;
		for (let h = 0; h < holds.length && holds[h].startS < atmEndS; h++) {
			const hold = holds[h];
			if (hold.levelC >= coldest + options.annealRiseC) {
				const refreeze = holds
					.slice(h + 1)
					.find((x) => x.startS < atmEndS && x.levelC <= hold.levelC - options.annealRiseC);
				const prev = holds[h - 1];
				if (refreeze && prev) {
					const ramp = locateRamp(t, shelf, prev.startIdx, hold.endIdx, prev.levelC, hold.levelC, options.sustainS);
					annealS = ramp ? ramp.startS : prev.endS;
				}
				break;
			}
			coldest = Math.min(coldest, hold.levelC);
		}
		if (pullIdx >= 0) {
			for (let h = 1; h < holds.length; h++) {
				const hold = holds[h];
				const prev = holds[h - 1];
				if (hold.endS <= (pullDownS as number) || hold.startS >= dryEndS) continue;
				if (hold.levelC >= options.warmShelfC && hold.levelC - prev.levelC >= options.minRampC) {
					const ramp = locateRamp(t, shelf, prev.startIdx, hold.endIdx, prev.levelC, hold.levelC, options.sustainS);
					secondaryS = Math.max(pullDownS as number, ramp ? ramp.startS : prev.endS);
					break;
				}
			}
			if (secondaryS === null) {
				warnings.push(`no warm shelf hold (≥ ${options.warmShelfC} °C) under vacuum: secondary drying not detected`);
			}
		}
	}

	const phases: PhaseInterval[] = [];
	const push = (name: PhaseName, a: number, b: number) => {
		if (b > a) phases.push({ name, startS: a, endS: b });
	};
	if (annealS !== null && annealS < atmEndS) {
		push('freezing', t0, annealS);
		push('annealing', annealS, atmEndS);
	} else {
		push('freezing', t0, atmEndS);
	}
	if (pullDownS !== null) {
		const sec = secondaryS !== null && secondaryS < dryEndS ? secondaryS : null;
		push('primary-drying', pullDownS, sec ?? dryEndS);
		if (sec !== null) push('secondary-drying', sec, dryEndS);
	}
	return { phases, pullDownS, backfillS, vacuumThresholdPa: thr, warnings };
}
