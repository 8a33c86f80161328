/**
 * Pressure-rise (leak) test of the evacuated, isolated chamber: Q = V · ΔP / Δt, in mbar·L/s,
 * the unit in which leak-rate limits are written (lyophilization.md, "Pressure-rise (leak)
 * test"). Example there: V = 500 L, ΔP = 0.024 mbar over 600 s → Q = 0.02 mbar·L/s.
 *
 * Limits are the site's: 2 × 10⁻² mbar·L/s for a clean, dry, empty dryer is quoted from the
 * Parenteral Society Technical Monograph No. 7 by secondary sources, and an industry survey
 * proposes operational rates ≤ 20 µbar·L/s (= 0.02 mbar·L/s). Only the limit the caller passes
 * is applied; DEFAULT_LEAK_LIMIT_MBAR_L_PER_S is offered as a starting value, not a rule.
 */

export const DEFAULT_LEAK_LIMIT_MBAR_L_PER_S = 0.02;

export interface LeakInput {
	/** chamber (and condenser, if open to it) volume, L */
	volumeL: number;
	/** pressure rise, mbar */
	deltaPmbar: number;
	/** duration of the rise, s */
	deltaTs: number;
}

/** Q = V · ΔP / Δt, mbar·L/s. Throws on a non-positive volume or duration. */
export function computeLeakRate(input: LeakInput): number {
	const { volumeL, deltaPmbar, deltaTs } = input;
	if (!(volumeL > 0) || !(deltaTs > 0) || !Number.isFinite(deltaPmbar)) {
		throw new RangeError('leak rate needs volume > 0, duration > 0 and a finite pressure rise');
	}
	return (volumeL * deltaPmbar) / deltaTs;
}

export interface LeakFit {
	/** V · slope, mbar·L/s */
	leakRateMbarLPerS: number;
	/** least-squares slope, Pa/s */
	slopePaPerS: number;
	/** fitted pressure at t = 0, Pa */
	interceptPa: number;
	/** standard error of the slope, Pa/s (NaN for n < 3) */
	slopeStdErrPaPerS: number;
	/** coefficient of determination (NaN when all pressures are equal) */
	r2: number;
	/** points used (finite ones) */
	n: number;
}

/**
 * Leak rate from the pressure readings of a rise test by an ordinary least-squares straight
 * line p = a + b·t (a better estimate than two end readings, which carry the full noise of two
 * samples). Uses centred sums for numerical stability (t of a long log can be ~10⁵ s).
 * Non-finite points are skipped; at least two distinct times are needed.
 * Pa/s → mbar/s: 1 mbar = 100 Pa.
 */
export function fitLeakRate(points: readonly { tS: number; pPa: number }[], volumeL: number): LeakFit {
	if (!(volumeL > 0)) throw new RangeError('volume must be > 0');
	const pts = points.filter((p) => Number.isFinite(p.tS) && Number.isFinite(p.pPa));
	const n = pts.length;
	if (n < 2) throw new RangeError('a leak-rate fit needs at least two readings');
	let mt = 0;
	let mp = 0;
	for (const p of pts) {
		mt += p.tS;
		mp += p.pPa;
	}
	mt /= n;
	mp /= n;
	let stt = 0;
	let stp = 0;
	let spp = 0;
	for (const p of pts) {
		const dt = p.tS - mt;
		const dp = p.pPa - mp;
		stt += dt * dt;
		stp += dt * dp;
		spp += dp * dp;
	}
	if (!(stt > 0)) throw new RangeError('a leak-rate fit needs readings at two or more distinct times');
	const slope = stp / stt;
	const intercept = mp - slope * mt;
	const sse = Math.max(0, spp - slope * stp);
	return {
		leakRateMbarLPerS: (volumeL * slope) / 100,
		slopePaPerS: slope,
		interceptPa: intercept,
		slopeStdErrPaPerS: n > 2 ? Math.sqrt(sse / (n - 2) / stt) : NaN,
		r2: spp > 0 ? (stp * stp) / (stt * spp) : NaN,
		n
	};
}

export interface LeakAssessment {
	leakRateMbarLPerS: number;
	limitMbarLPerS: number;
	passed: boolean;
}

/** Pass when the leak rate does not exceed the limit (≤, as limits are written "not more than"). */
export function checkLeakRate(leakRateMbarLPerS: number, limitMbarLPerS: number): LeakAssessment {
	if (!(limitMbarLPerS > 0)) throw new RangeError('the leak-rate limit must be > 0');
	return { leakRateMbarLPerS, limitMbarLPerS, passed: leakRateMbarLPerS <= limitMbarLPerS };
}

/** Manometer readings in [fromS, toS] as fit points, e.g. the isolation period of a rise test. */
export function selectLeakPoints(
	t: Float64Array,
	pressurePa: Float64Array,
	fromS: number,
	toS: number
): { tS: number; pPa: number }[] {
	const out: { tS: number; pPa: number }[] = [];
	for (let i = 0; i < t.length; i++) {
		if (t[i] < fromS) continue;
		if (t[i] > toS) break;
		if (Number.isFinite(pressurePa[i])) out.push({ tS: t[i], pPa: pressurePa[i] });
	}
	return out;
}
