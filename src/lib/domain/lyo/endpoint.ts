/**
 * Primary-drying endpoint by comparative pressure (Patel, Doen & Pikal 2010, "Determination of
 * end point of primary drying in freeze-drying process control", AAPS PharmSciTech 11, 73–84).
 *
 * A Pirani gauge measures thermal conductivity and is calibrated in nitrogen; in water vapour it
 * reads about 1.5–1.7 × the capacitance manometer (which is gas-independent). While ice
 * sublimes the chamber gas is mostly water vapour; when the ice is gone the ratio Pirani/CM
 * falls to about 1. Onset = the sharp fall begins, midpoint = the steepest fall, offset = the
 * Pirani meets the manometer; the offset (or later) is the safe end of primary drying.
 *
 * Method (the published construction of lyophilization.md, with our choices named):
 * 1. ratio r = Pirani / manometer where both read > 0, median per bin of binS seconds (the
 *    median rejects the spikes of pressure-rise tests and single bad readings); runs of up to
 *    maxGapBins empty bins are bridged by linear interpolation, longer gaps stay empty;
 * 2. Savitzky–Golay smoothing (Savitzky & Golay 1964, Anal. Chem. 36, 1627–1639), quadratic,
 *    for the level and the first derivative; first with halfWindow bins, then again with the
 *    half window set to adaptiveWindow × the width of the fall the first pass found (between
 *    75 % and 25 % of the drop), because the derivative of a slow fall is flat at its minimum
 *    and a fixed short window lets noise decide where the minimum is;
 * 3. midpoint = minimum of the derivative (steepest fall), located by a least-squares parabola
 *    through the peak of the derivative (refineSteepest);
 * 4. upper/lower plateau = median of the smoothed ratio over plateauS before / after the fall
 *    (the fall is the region around the midpoint where the derivative is steeper than
 *    fallFraction × the steepest);
 * 5. onset/offset = where the tangent at the midpoint meets the upper/lower plateau; the
 *    tangent's slope comes from the quartic SG derivative on the same window (quarticSlope),
 *    which does not flatten the peak as the quadratic one does.
 * Measured on synthetic logistic falls (tests/unit/lyo/endpoint.test.ts and the bench): without
 * noise, midpoint exact and onset/offset within 0.5 min of the analytic midpoint ∓ 2τ; with 1 %
 * gauge noise at 60 s sampling, midpoint within 0.1 τ and onset/offset within 0.15 τ (τ the
 * logistic time constant; 12 seeds, τ = 20–90 min).
 * No endpoint ("no clear fall") when the drop between the plateaus is below minRatioDrop, or a
 * plateau has too few data (for instance when the log ends during the fall).
 */
import { computeMedian } from './signal';

export interface Endpoint {
	onsetS: number;
	midpointS: number;
	offsetS: number;
}

export interface EndpointOptions {
	/** bin width, s (default 60) */
	binS: number;
	/** Savitzky–Golay half window in bins (default 15 → 31 bins = 31 min at 60 s bins) */
	halfWindow: number;
	/** plateau length for the upper and lower levels, s (default 7200) */
	plateauS: number;
	/** the fall region is where d/dt < fallFraction × the steepest (default 0.1) */
	fallFraction: number;
	/** smallest drop of the ratio between the plateaus that counts as a fall (default 0.15) */
	minRatioDrop: number;
	/** longest run of empty bins bridged by interpolation (default 10) */
	maxGapBins: number;
	/** second-pass SG half window as a fraction of the fall width (25–75 % of the drop) */
	adaptiveWindow: number;
	quarticSlope: boolean;
}

export const DEFAULT_ENDPOINT_OPTIONS: EndpointOptions = {
	binS: 60,
	halfWindow: 15,
	plateauS: 7200,
	fallFraction: 0.1,
	minRatioDrop: 0.15,
	maxGapBins: 10,
	adaptiveWindow: 0.8,
	quarticSlope: true
};

/**
 * Savitzky–Golay convolution coefficients for the centre of a window of 2m+1 equally spaced
 * points: least-squares polynomial of the given degree, evaluated (derivative 0) or
 * differentiated (derivative 1, per sample spacing) at the centre. Solved from the normal
 * equations, so any degree < 2m+1 works.
 */
export function computeSavitzkyGolayCoefficients(
	halfWindow: number,
	degree: number,
	derivative: 0 | 1
): Float64Array {
	const m = halfWindow;
	const size = degree + 1;
	if (!(m >= 1) || degree < derivative || size > 2 * m + 1) {
		throw new RangeError('invalid Savitzky–Golay window');
	}
	// Normal matrix N = AᵀA with A[i][j] = x_i^j, x_i = −m…m; we need row `derivative` of N⁻¹Aᵀ.
	const N: number[][] = Array.from({ length: size }, (_, r) =>
		Array.from({ length: size }, (_, c) => {
			let s = 0;
			for (let x = -m; x <= m; x++) s += x ** (r + c);
			return s;
		})
	);
	// Solve N y = e_derivative (N is symmetric, so row `derivative` of N⁻¹ is y).
	const rhs: number[] = Array.from({ length: size }, (_, r) => (r === derivative ? 1 : 0));
	for (let col = 0; col < size; col++) {
		let piv = col;
		for (let r = col + 1; r < size; r++) if (Math.abs(N[r][col]) > Math.abs(N[piv][col])) piv = r;
		[N[col], N[piv]] = [N[piv], N[col]];
		[rhs[col], rhs[piv]] = [rhs[piv], rhs[col]];
		for (let r = 0; r < size; r++) {
			if (r === col) continue;
			const f = N[r][col] / N[col][col];
			for (let c = col; c < size; c++) N[r][c] -= f * N[col][c];
			rhs[r] -= f * rhs[col];
		}
	}
	const y = rhs.map((v, r) => v / N[r][r]);
	const out = new Float64Array(2 * m + 1);
	for (let x = -m; x <= m; x++) {
		let s = 0;
		for (let j = 0; j < size; j++) s += y[j] * x ** j;
		out[x + m] = s; // derivative 1: d/dx of the fitted polynomial at 0 (1! = 1)
	}
	return out;
}

/** Convolution with SG coefficients; NaN wherever the full window is not finite. */
export function smoothSavitzkyGolay(values: ArrayLike<number>, coefficients: Float64Array): Float64Array {
	const n = values.length;
	const m = (coefficients.length - 1) / 2;
	const out = new Float64Array(n).fill(NaN);
	for (let i = m; i < n - m; i++) {
		let s = 0;
		for (let j = -m; j <= m; j++) s += coefficients[j + m] * values[i + j];
		out[i] = s; // NaN propagates
	}
	return out;
}

/** Median Pirani/manometer ratio per bin over [fromS, toS); NaN for bins without both readings > 0. */
export function binPressureRatio(
	t: Float64Array,
	pirani: Float64Array,
	manometer: Float64Array,
	fromS: number,
	toS: number,
	binS: number
): { centreS: Float64Array; ratio: Float64Array } {
	const nb = Math.max(0, Math.ceil((toS - fromS) / binS));
	const centreS = new Float64Array(nb);
	const ratio = new Float64Array(nb).fill(NaN);
	let i = 0;
	while (i < t.length && t[i] < fromS) i++;
	const buf: number[] = [];
	for (let b = 0; b < nb; b++) {
		const end = fromS + (b + 1) * binS;
		buf.length = 0;
		let tSum = 0;
		for (; i < t.length && t[i] < end && t[i] < toS; i++) {
			const a = pirani[i];
			const c = manometer[i];
			if (a > 0 && c > 0) {
				buf.push(a / c);
				tSum += t[i];
			}
		}
		// The bin's time is the mean time of its readings (the nominal centre when empty), so a
		// log sampled once per bin is not shifted by half a bin.
		centreS[b] = buf.length > 0 ? tSum / buf.length : fromS + (b + 0.5) * binS;
		if (buf.length > 0) ratio[b] = computeMedian(buf);
	}
	return { centreS, ratio };
}

/** Linear interpolation across runs of at most maxGap NaN values (in place). */
function bridgeGaps(v: Float64Array, maxGap: number): void {
	let last = -1;
	for (let i = 0; i < v.length; i++) {
		if (Number.isNaN(v[i])) continue;
		if (last >= 0 && i - last > 1 && i - last - 1 <= maxGap) {
			for (let k = last + 1; k < i; k++) v[k] = v[last] + ((v[i] - v[last]) * (k - last)) / (i - last);
		}
		last = i;
	}
}

/** Linear interpolation of v at a fractional index. */
function interpolateAt(v: Float64Array, x: number): number {
	const i = Math.floor(x);
	const f = x - i;
	if (f === 0 || i + 1 >= v.length) return v[Math.min(i, v.length - 1)];
	return v[i] + f * (v[i + 1] - v[i]);
}

/**
 * Steepest point of the fall with sub-bin resolution. The derivative is flat near its minimum,
 * so the single most negative bin wanders with noise (by ±0.6 τ of a logistic fall at 1 %
 * gauge noise, as measured on synthetic logs). A least-squares parabola through all bins around
 * the minimum where the derivative is steeper than 70 % of it uses the whole peak instead; its
 * vertex is the steepest point (exact for any fall symmetric about its midpoint) and its value
 * the steepest slope. Falls back to the single bin when the peak is too narrow for a fit.
 */
function refineSteepest(slope: Float64Array, k: number): { offset: number; slopeAt: number } {
	const limit = 0.7 * slope[k];
	let a = k;
	while (a > 0 && slope[a - 1] < limit) a--;
	let b = k;
	while (b < slope.length - 1 && slope[b + 1] < limit) b++;
	if (b - a + 1 < 5) return { offset: 0, slopeAt: slope[k] };
	// Normal equations of y = c0 + c1 x + c2 x², x = i − k.
	const S = [0, 0, 0, 0, 0];
	const R = [0, 0, 0];
	for (let i = a; i <= b; i++) {
		const x = i - k;
		const y = slope[i];
		let p = 1;
		for (let e = 0; e <= 4; e++) {
			S[e] += p;
			if (e <= 2) R[e] += p * y;
			p *= x;
		}
	}
	const M = [
		[S[0], S[1], S[2], R[0]],
		[S[1], S[2], S[3], R[1]],
		[S[2], S[3], S[4], R[2]]
	];
	for (let c = 0; c < 3; c++) {
		for (let r = 0; r < 3; r++) {
			if (r === c) continue;
			const f = M[r][c] / M[c][c];
			for (let j = c; j < 4; j++) M[r][j] -= f * M[c][j];
		}
	}
	const c0 = M[0][3] / M[0][0];
	const c1 = M[1][3] / M[1][1];
	const c2 = M[2][3] / M[2][2];
	if (!(c2 > 0)) return { offset: 0, slopeAt: slope[k] };
	const xv = Math.max(a - k, Math.min(b - k, -c1 / (2 * c2)));
	return { offset: xv, slopeAt: c0 + c1 * xv + c2 * xv * xv };
}

export interface EndpointResult {
	endpoint: Endpoint | null;
	/** plateau levels of the ratio when a fall was found */
	upperRatio: number | null;
	lowerRatio: number | null;
	/** why there is no endpoint, or a caution about the one found */
	warnings: string[];
}

interface FallFit {
	k: number;
	offset: number;
	slopeAt: number;
	level: number;
	upper: number;
	lower: number;
	/** bins between the 75 % and the 25 % level of the drop */
	widthBins: number;
}

/** One pass of steps 2–4 with SG half window m; a string says why there is no fall. */
function fitFall(ratio: Float64Array, m: number, options: EndpointOptions): FallFit | string {
	if (ratio.length < 2 * m + 3) return 'comparative pressure: too little data under vacuum for an endpoint';
	const smooth = smoothSavitzkyGolay(ratio, computeSavitzkyGolayCoefficients(m, 2, 0));
	const slope = smoothSavitzkyGolay(ratio, computeSavitzkyGolayCoefficients(m, 2, 1)); // per bin
	let k = -1;
	for (let i = 0; i < slope.length; i++) if (!Number.isNaN(slope[i]) && (k < 0 || slope[i] < slope[k])) k = i;
	if (k < 0 || !(slope[k] < 0)) return 'comparative pressure: no fall of the Pirani/manometer ratio';
	const steepest = slope[k];
	let a = k;
	while (a > 0 && slope[a - 1] < options.fallFraction * steepest) a--;
	let b = k;
	while (b < slope.length - 1 && slope[b + 1] < options.fallFraction * steepest) b++;
	const plateauBins = Math.max(1, Math.round(options.plateauS / options.binS));
	const before = smooth.subarray(Math.max(0, a - plateauBins), a);
	const after = smooth.subarray(b + 1, Math.min(smooth.length, b + 1 + plateauBins));
	const enough = (arr: Float64Array) => arr.filter((x) => Number.isFinite(x)).length >= plateauBins / 4;
	if (!enough(after)) return 'comparative pressure: the ratio is still falling where the data end; no endpoint';
	if (!enough(before)) return 'comparative pressure: no plateau before the fall; no endpoint';
	const upper = computeMedian(before);
	const lower = computeMedian(after);
	if (upper - lower < options.minRatioDrop) {
		return `comparative pressure: the ratio falls by only ${(upper - lower).toFixed(2)}; no clear endpoint`;
	}
	const { offset, slopeAt: slope2 } = refineSteepest(slope, k);
	// The quadratic SG derivative is a local straight-line slope, which flattens the peak of the
	// derivative by a few per cent once the window is matched to the fall; the quartic SG
	// derivative on the same window keeps the peak (at more noise), so the tangent's slope is
	// taken from it, at the midpoint found above.
	let slopeAt = slope2;
	if (options.quarticSlope && 2 * m + 1 > 5) {
		const q = smoothSavitzkyGolay(ratio, computeSavitzkyGolayCoefficients(m, 4, 1));
		const v = interpolateAt(q, k + offset);
		if (Number.isFinite(v) && v < 0) slopeAt = v;
	}
	// Width of the fall between the 75 % and 25 % levels of the drop (level crossings on a steep
	// slope are little affected by noise).
	const hiLevel = lower + 0.75 * (upper - lower);
	const loLevel = lower + 0.25 * (upper - lower);
	let u = k;
	while (u > 0 && !(smooth[u] >= hiLevel)) u--;
	let l = k;
	while (l < smooth.length - 1 && !(smooth[l] <= loLevel)) l++;
	return { k, offset, slopeAt, level: interpolateAt(smooth, k + offset), upper, lower, widthBins: l - u };
}

export function detectEndpoint(
	t: Float64Array,
	pirani: Float64Array,
	manometer: Float64Array,
	fromS: number,
	toS: number,
	options: EndpointOptions = DEFAULT_ENDPOINT_OPTIONS
): EndpointResult {
	const none = (w: string): EndpointResult => ({
		endpoint: null,
		upperRatio: null,
		lowerRatio: null,
		warnings: [w]
	});
	const { centreS, ratio } = binPressureRatio(t, pirani, manometer, fromS, toS, options.binS);
	bridgeGaps(ratio, options.maxGapBins);
	let fit = fitFall(ratio, options.halfWindow, options);
	if (typeof fit === 'string') return none(fit);
	// Second pass with the window matched to the fall that the first pass found: a slow fall
	// needs a wide window, or noise decides where the (flat) steepest point is.
	const adapted = Math.round(fit.widthBins * options.adaptiveWindow);
	const maxHalf = Math.floor((ratio.length - 3) / 2);
	if (adapted > options.halfWindow) {
		const second = fitFall(ratio, Math.min(adapted, maxHalf), options);
		if (typeof second !== 'string') fit = second;
	}
	const { k, offset, slopeAt, level, upper, lower } = fit;
	const midpointS = centreS[k] + offset * options.binS;
	const perS = slopeAt / options.binS;
	const warnings: string[] = [];
	if (lower > 1.1) {
		warnings.push(
			`comparative pressure: the ratio levels off at ${lower.toFixed(2)}, not near 1 (gauge calibration?)`
		);
	}
	return {
		endpoint: {
			onsetS: midpointS + (upper - level) / perS,
			midpointS,
			offsetS: midpointS + (lower - level) / perS
		},
		upperRatio: upper,
		lowerRatio: lower,
		warnings
	};
}
