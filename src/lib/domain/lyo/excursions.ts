/**
 * Excursions: periods in which a reading lies outside its acceptable range.
 *
 * Bands are per-sample lower/upper limits (NaN = that side is not checked at that sample), built
 * from the recipe as aligned with the actual run (steps.ts):
 * - Shelf temperature, holds: setpoint ± the step's tolerance, from the first time the shelf is
 *   within tolerance after the ramp (band entry) to the end of the hold.
 * - Shelf temperature, ramps: we do NOT make the band follow the planned trajectory in time,
 *   because a shelf that ramps slower than planned would then be "out of range" for the whole
 *   ramp although it is doing what the dryer can do (a slow ramp is reported as a ramp-rate
 *   difference instead). During a ramp the band is the envelope of the two setpoints widened by
 *   the tolerance, [min(from, to) − tol, max(from, to) + tol], which still catches overshoot
 *   and a shelf moving the wrong way.
 * - Chamber pressure (capacitance manometer, the gas-independent gauge): pressureMinPa …
 *   pressureMaxPa of each drying step, checked from the first time the pressure is within the
 *   step's range, but no later than pressureSettleS after the step starts (so the pull-down and
 *   a change of setpoint are not excursions, while a chamber that never reaches its setpoint is).
 *   Not checked at atmospheric pressure (freezing, annealing, after the backfill).
 *
 * Common practice (site SOPs, not a regulation): excursions shorter than a minimum duration —
 * default 60 s — are not reported; this also hides the deliberate pressure rise of a
 * pressure-rise/MTM measurement, which lasts tens of seconds.
 */
import type { PhaseInterval } from './phases';
import { searchTimeIndex } from './series';
import type { StepAlignment } from './steps';

export interface Excursion {
	/** channel id */
	channel: string;
	kind: 'above' | 'below';
	/** start and end, s from log start: linear interpolation of the limit crossing when the
	 * neighbouring sample is valid and in range, else the sample time */
	startS: number;
	endS: number;
	durationS: number;
	/** most extreme reading: the maximum for 'above', the minimum for 'below' (canonical unit) */
	peak: number;
}

export interface Bands {
	lower: Float64Array;
	upper: Float64Array;
}

export interface ExcursionOptions {
	/** shorter excursions are not reported, s (default 60, common practice) */
	minDurationS: number;
	/** NaN gaps up to this long do not end an excursion, s (default 300) */
	maxGapS: number;
}

export function createBands(n: number): Bands {
	return { lower: new Float64Array(n).fill(NaN), upper: new Float64Array(n).fill(NaN) };
}

function fillBand(t: Float64Array, bands: Bands, fromS: number, toS: number, lo: number, hi: number): void {
	if (!(toS > fromS)) return;
	const a = searchTimeIndex(t, fromS);
	const b = searchTimeIndex(t, toS);
	bands.lower.fill(lo, a, b);
	bands.upper.fill(hi, a, b);
}

/** Shelf temperature bands from the aligned recipe steps (see the module comment). */
export function buildShelfBands(t: Float64Array, steps: StepAlignment[], phases: PhaseInterval[]): Bands {
	const bands = createBands(t.length);
	for (const s of steps) {
		if (!s.found || s.rampStartS === null || s.bandEntryS === null || s.holdEndS === null) continue;
		const phase = phases.find((p) => p.name === s.phase);
		if (!phase) continue;
		const tol = s.spec.shelfToleranceC;
		const rampFrom = s.step === 0 ? phase.startS : s.rampStartS;
		fillBand(t, bands, rampFrom, s.bandEntryS, Math.min(s.fromC, s.toC) - tol, Math.max(s.fromC, s.toC) + tol);
		fillBand(t, bands, s.bandEntryS, s.holdEndS, s.toC - tol, s.toC + tol);
	}
	return bands;
}

/** Chamber pressure bands for one manometer channel (see the module comment). */
export function buildPressureBands(
	t: Float64Array,
	pressure: Float64Array,
	steps: StepAlignment[],
	phases: PhaseInterval[],
	pressureSettleS: number
): Bands {
	const bands = createBands(t.length);
	for (const s of steps) {
		const { pressureMinPa: lo, pressureMaxPa: hi } = s.spec;
		if (!s.found || lo === null || hi === null || s.rampStartS === null || s.holdEndS === null) continue;
		const phase = phases.find((p) => p.name === s.phase);
		if (!phase) continue;
		const stepStart = s.step === 0 ? phase.startS : s.rampStartS;
		const a = searchTimeIndex(t, stepStart);
		const b = searchTimeIndex(t, s.holdEndS);
		let k = a;
		while (k < b && !(pressure[k] >= lo && pressure[k] <= hi)) k++;
		const checkFrom = Math.min(k < b ? t[k] : Infinity, stepStart + pressureSettleS);
		fillBand(t, bands, checkFrom, s.holdEndS, lo, hi);
	}
	return bands;
}

/**
 * Finds the runs of readings outside [lower, upper]. NaN readings are skipped: they neither
 * start nor end an excursion, but a gap longer than maxGapS between two out-of-range readings
 * splits it. An excursion ends at the first in-range reading, or where checking stops (band
 * NaN), or at the last out-of-range reading when the data end or a long gap follows. Runs above
 * and below are separate excursions.
 */
export function findExcursions(
	t: Float64Array,
	values: Float64Array,
	bands: Bands,
	channel: string,
	options: ExcursionOptions
): Excursion[] {
	const out: Excursion[] = [];
	const { lower, upper } = bands;
	let open: { kind: 'above' | 'below'; startS: number; peak: number; last: number } | null = null;
	let prev = -1; // previous finite reading that was checked
	// > 0 outside the limit of that kind, ≤ 0 inside; NaN where that side is not checked
	const excess = (i: number, kind: 'above' | 'below') =>
		kind === 'above' ? values[i] - upper[i] : lower[i] - values[i];
	const close = (endS: number) => {
		if (!open) return;
		const durationS = endS - open.startS;
		if (durationS >= options.minDurationS) {
			out.push({ channel, kind: open.kind, startS: open.startS, endS, durationS, peak: open.peak });
		}
		open = null;
	};
	for (let i = 0; i < t.length; i++) {
		const x = values[i];
		if (Number.isNaN(x)) continue;
		const lo = lower[i];
		const hi = upper[i];
		if (Number.isNaN(lo) && Number.isNaN(hi)) {
			if (open) close(t[open.last]);
			prev = -1;
			continue;
		}
		const kind = x > hi ? 'above' : x < lo ? 'below' : null;
		if (open && (kind !== open.kind || t[i] - t[open.last] > options.maxGapS)) {
			const contiguous = kind === null && open.last === prev && t[i] - t[prev] <= options.maxGapS;
			if (contiguous) {
				// crossing back into range between the last outside and this inside reading
				const eA = excess(prev, open.kind);
				const eB = excess(i, open.kind);
				close(t[prev] + (t[i] - t[prev]) * (eA / (eA - eB)));
			} else {
				close(t[open.last]);
			}
		}
		if (kind && !open) {
			let startS = t[i];
			if (prev >= 0 && t[i] - t[prev] <= options.maxGapS) {
				const eA = excess(prev, kind);
				const eB = excess(i, kind);
				if (eA <= 0 && Number.isFinite(eA)) startS = t[prev] + (t[i] - t[prev]) * (-eA / (eB - eA));
			}
			open = { kind, startS, peak: x, last: i };
		} else if (kind && open) {
			open.peak = kind === 'above' ? Math.max(open.peak, x) : Math.min(open.peak, x);
			open.last = i;
		}
		prev = i;
	}
	if (open) close(t[(open as { last: number }).last]);
	return out;
}
