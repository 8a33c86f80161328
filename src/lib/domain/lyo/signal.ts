/**
 * Signal primitives for cycle analysis: NaN-aware smoothing, level crossings, ramp location and
 * hold/ramp segmentation of a shelf temperature trace. All work on the shared time axis of a
 * CycleSeries (seconds, strictly increasing) and skip NaN samples.
 */

/** Median of the finite values (NaN when there are none). Sorts a copy. */
export function computeMedian(values: ArrayLike<number>): number {
	const finite: number[] = [];
	for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i])) finite.push(values[i]);
	if (finite.length === 0) return NaN;
	finite.sort((a, b) => a - b);
	const m = finite.length >> 1;
	return finite.length % 2 === 1 ? finite[m] : 0.5 * (finite[m - 1] + finite[m]);
}

/**
 * Centered moving average over ±windowS/2 seconds, NaN-aware (NaN samples are left out of the
 * mean; a sample whose window holds no finite value stays NaN). O(n) with two pointers and
 * running sums, so it also suits 1 s logs of several days. Used only to find phases and ramps;
 * excursions are always judged on the raw readings.
 */
export function smoothMovingAverage(t: Float64Array, v: Float64Array, windowS: number): Float64Array {
	const n = t.length;
	const out = new Float64Array(n);
	if (!(windowS > 0)) {
		out.set(v);
		return out;
	}
	const half = windowS / 2;
	let lo = 0;
	let hi = 0; // window is [lo, hi)
	let sum = 0;
	let count = 0;
	for (let i = 0; i < n; i++) {
		while (hi < n && t[hi] <= t[i] + half) {
			if (!Number.isNaN(v[hi])) {
				sum += v[hi];
				count++;
			}
			hi++;
		}
		while (t[lo] < t[i] - half) {
			if (!Number.isNaN(v[lo])) {
				sum -= v[lo];
				count--;
			}
			lo++;
		}
		out[i] = count > 0 ? sum / count : NaN;
	}
	return out;
}

export type Direction = 'up' | 'down';

function isBeyond(x: number, level: number, dir: Direction): boolean {
	return dir === 'up' ? x >= level : x <= level;
}

/**
 * First index k in [i0, i1) whose value is beyond `level` (≥ for 'up', ≤ for 'down') and stays
 * beyond for at least sustainS seconds (NaN samples neither confirm nor break the run; a run
 * cut short by the end of the window counts). −1 if none. Rejects a single noisy sample.
 */
export function findSustainedCrossing(
	t: Float64Array,
	v: Float64Array,
	i0: number,
	i1: number,
	level: number,
	dir: Direction,
	sustainS: number
): number {
	let k = i0;
	while (k < i1) {
		const x = v[k];
		if (Number.isNaN(x) || !isBeyond(x, level, dir)) {
			k++;
			continue;
		}
		let j = k + 1;
		let broken = -1;
		for (; j < i1 && t[j] - t[k] < sustainS; j++) {
			const y = v[j];
			if (!Number.isNaN(y) && !isBeyond(y, level, dir)) {
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
 * Time at which the straight line between samples a and b crosses `level`; the sample time of
 * the nearer end when the two values are equal.
 */
export function interpolateCrossing(t: Float64Array, v: Float64Array, a: number, b: number, level: number): number {
	const va = v[a];
	const vb = v[b];
	if (vb === va) return t[b];
	const f = Math.min(1, Math.max(0, (level - va) / (vb - va)));
	return t[a] + f * (t[b] - t[a]);
}

export interface RampLocation {
	/** extrapolated start: the 10–90 % line meets the from-level, s */
	startS: number;
	/** extrapolated end: the 10–90 % line meets the to-level, s */
	endS: number;
	/** times of the 10 % and 90 % reference-level crossings, s */
	t10S: number;
	t90S: number;
	/** |Δ| of the 10–90 % span over its duration, °C/min */
	rateCPerMin: number;
	/** index of the sample at or just after the 90 % crossing */
	i90: number;
}

/**
 * Locates the ramp from `fromC` to `toC` in [i0, i1): first the trace must be at the from-level
 * (on the from side of the 10 % reference level), then it must cross the 90 % reference level
 * and stay there (sustainS). The 10 % crossing is the last one before that. The ramp rate is
 * taken between the 10 % and 90 % reference levels, the convention of IEEE Std 181-2011
 * (transition duration between 10 % and 90 % reference levels), which ignores the rounded
 * corners a real shelf makes at both ends of a ramp; start and end are that line extended to the
 * two levels. If the window opens mid-ramp (between the 10 % and 90 % levels), the first reading
 * takes the place of the 10 % point. Null when the trace never reaches the to-level, or starts
 * beyond the 90 % level.
 */
export function locateRamp(
	t: Float64Array,
	v: Float64Array,
	i0: number,
	i1: number,
	fromC: number,
	toC: number,
	sustainS: number
): RampLocation | null {
	const delta = toC - fromC;
	if (delta === 0) return null;
	const dir: Direction = delta > 0 ? 'up' : 'down';
	const back: Direction = delta > 0 ? 'down' : 'up';
	const l10 = fromC + 0.1 * delta;
	const l90 = fromC + 0.9 * delta;
	let first = i0;
	while (first < i1 && Number.isNaN(v[first])) first++;
	if (first >= i1) return null;
	// The window may open in the middle of the ramp (a log started late): then the first reading
	// stands in for the 10 % point and the line is extrapolated back from it.
	const midRamp = !isBeyond(v[first], l10, back) && !isBeyond(v[first], l90, dir);
	let start = first;
	if (!midRamp) {
		while (start < i1 && (Number.isNaN(v[start]) || !isBeyond(v[start], l10, back))) start++;
		if (start >= i1) return null;
	}
	const k90 = findSustainedCrossing(t, v, start, i1, l90, dir, sustainS);
	if (k90 < 0) return null;
	let t10: number;
	let level10 = l10;
	if (midRamp) {
		t10 = t[first];
		level10 = v[first];
	} else {
		let k10 = -1;
		for (let k = k90 - 1; k >= start; k--) {
			if (!Number.isNaN(v[k]) && isBeyond(v[k], l10, back)) {
				k10 = k;
				break;
			}
		}
		if (k10 < 0) return null;
		let a = k10 + 1;
		while (a < k90 && Number.isNaN(v[a])) a++;
		t10 = interpolateCrossing(t, v, k10, a, l10);
	}
	let b = k90 - 1;
	while (b > start && Number.isNaN(v[b])) b--;
	const t90 = interpolateCrossing(t, v, b, k90, l90);
	const span = Math.max(t90 - t10, 1e-9);
	const ratePerS = Math.abs(l90 - level10) / span;
	return {
		startS: t10 - Math.abs(level10 - fromC) / ratePerS,
		endS: t90 + Math.abs(toC - l90) / ratePerS,
		t10S: t10,
		t90S: t90,
		rateCPerMin: ratePerS * 60,
		i90: k90
	};
}

export interface ShelfSegment {
	kind: 'hold' | 'ramp';
	startIdx: number;
	/** exclusive */
	endIdx: number;
	startS: number;
	endS: number;
	/** median level of a hold, °C; NaN for a ramp */
	levelC: number;
}

export interface SegmentOptions {
	/** window over which the slope is estimated, s (default 600) */
	windowS?: number;
	/** |slope| above this is a ramp, °C/min (default 0.05 = 3 °C/h) */
	rampThresholdCPerMin?: number;
	/** shortest hold kept, s (default 1200) */
	minHoldS?: number;
	/** adjacent holds closer than this in level are merged, °C (default 1) */
	mergeLevelC?: number;
}

/**
 * Cuts a shelf temperature trace into holds and ramps without a recipe. The trace is split into
 * windows of windowS; a window whose central-difference slope of window means exceeds the
 * threshold is a ramp, else a hold. Holds shorter than minHoldS become part of the ramps around
 * them, and neighbouring holds at nearly the same level are merged. A ramp slower than the
 * threshold (default 3 °C/h) reads as a hold: an accepted limitation of recipe-free analysis.
 */
export function segmentShelf(
	t: Float64Array,
	v: Float64Array,
	i0: number,
	i1: number,
	options: SegmentOptions = {}
): ShelfSegment[] {
	const windowS = options.windowS ?? 600;
	const thr = (options.rampThresholdCPerMin ?? 0.05) / 60;
	const minHoldS = options.minHoldS ?? 1200;
	const mergeLevelC = options.mergeLevelC ?? 1;
	if (i1 - i0 < 2) return [];
	// Window means.
	const wStart: number[] = [];
	const wMean: number[] = [];
	const wTime: number[] = [];
	for (let i = i0; i < i1; ) {
		const tEnd = t[i] + windowS;
		let sum = 0;
		let cnt = 0;
		let tSum = 0;
		const s = i;
		for (; i < i1 && t[i] < tEnd; i++) {
			if (!Number.isNaN(v[i])) {
				sum += v[i];
				tSum += t[i];
				cnt++;
			}
		}
		wStart.push(s);
		wMean.push(cnt > 0 ? sum / cnt : NaN);
		wTime.push(cnt > 0 ? tSum / cnt : t[s]);
	}
	const nw = wStart.length;
	const isRamp: boolean[] = new Array(nw).fill(false);
	for (let w = 0; w < nw; w++) {
		const a = Math.max(0, w - 1);
		const b = Math.min(nw - 1, w + 1);
		if (a === b || Number.isNaN(wMean[a]) || Number.isNaN(wMean[b])) continue;
		const slope = (wMean[b] - wMean[a]) / (wTime[b] - wTime[a]);
		isRamp[w] = Math.abs(slope) > thr;
	}
	// Runs of hold windows long enough to count.
	const holds: { a: number; b: number }[] = [];
	for (let w = 0; w < nw; ) {
		if (isRamp[w]) {
			w++;
			continue;
		}
		const a = w;
		while (w < nw && !isRamp[w]) w++;
		const startIdx = wStart[a];
		const endIdx = w < nw ? wStart[w] : i1;
		if (t[endIdx - 1] - t[startIdx] >= minHoldS) holds.push({ a: startIdx, b: endIdx });
	}
	const merged: ShelfSegment[] = [];
	for (const h of holds) {
		const level = computeMedian(v.subarray(h.a, h.b));
		const prev = merged[merged.length - 1];
		if (prev && Math.abs(prev.levelC - level) < mergeLevelC) {
			prev.endIdx = h.b;
			prev.endS = t[h.b - 1];
			prev.levelC = computeMedian(v.subarray(prev.startIdx, h.b));
			continue;
		}
		merged.push({ kind: 'hold', startIdx: h.a, endIdx: h.b, startS: t[h.a], endS: t[h.b - 1], levelC: level });
	}
	// Fill the gaps between holds (and at the ends) with ramps.
	const out: ShelfSegment[] = [];
	let cursor = i0;
	for (const h of merged) {
		if (h.startIdx > cursor) {
			out.push(rampSegment(t, cursor, h.startIdx));
		}
		out.push(h);
		cursor = h.endIdx;
	}
	if (cursor < i1) out.push(rampSegment(t, cursor, i1));
	return out;
}

function rampSegment(t: Float64Array, a: number, b: number): ShelfSegment {
	return { kind: 'ramp', startIdx: a, endIdx: b, startS: t[a], endS: t[b - 1], levelC: NaN };
}
