/**
 * In-memory model of an uploaded freeze-dryer cycle log, and fast down-sampling for charts.
 *
 * One shared time axis `t` (seconds from the log start, strictly increasing) and any number of
 * channels, each a Float64Array of the same length in a canonical unit (°C or Pa, see
 * ../units.ts). NaN marks "no reading" (a dropped placeholder such as 999.9, a gauge off scale,
 * a gap); every analysis skips NaN samples rather than treating them as values.
 */
import type { CanonicalUnit } from '../units';

export const CHANNEL_ROLES = [
	'shelf',
	'product',
	'condenser',
	'manometer',
	'pirani',
	'setpoint-shelf',
	'setpoint-pressure',
	'other'
] as const;
export type ChannelRole = (typeof CHANNEL_ROLES)[number];

/** The canonical unit each role must use; 'other' may be anything (null = dimensionless). */
export const ROLE_UNITS: Record<Exclude<ChannelRole, 'other'>, CanonicalUnit> = {
	shelf: 'degC',
	product: 'degC',
	condenser: 'degC',
	'setpoint-shelf': 'degC',
	manometer: 'Pa',
	pirani: 'Pa',
	'setpoint-pressure': 'Pa'
};

export interface SeriesChannel {
	/** stable id, e.g. the mapped column name; excursions refer to it */
	id: string;
	role: ChannelRole;
	unit: CanonicalUnit | null;
	values: Float64Array;
}

export interface CycleSeries {
	/** seconds from the log start, strictly increasing */
	t: Float64Array;
	channels: SeriesChannel[];
}

/** Structural problems of a series (empty array = valid). */
export function validateSeries(series: CycleSeries): string[] {
	const problems: string[] = [];
	const n = series.t.length;
	for (let i = 0; i < n; i++) {
		if (!Number.isFinite(series.t[i])) {
			problems.push(`t[${i}] is not a finite number`);
			break;
		}
		if (i > 0 && !(series.t[i] > series.t[i - 1])) {
			problems.push(`t is not strictly increasing at index ${i}`);
			break;
		}
	}
	const ids = new Set<string>();
	for (const ch of series.channels) {
		if (ids.has(ch.id)) problems.push(`duplicate channel id "${ch.id}"`);
		ids.add(ch.id);
		if (ch.values.length !== n) {
			problems.push(`channel "${ch.id}" has ${ch.values.length} values for ${n} times`);
		}
		if (ch.role !== 'other' && ch.unit !== ROLE_UNITS[ch.role]) {
			problems.push(`channel "${ch.id}" (${ch.role}) must be in ${ROLE_UNITS[ch.role]}`);
		}
	}
	return problems;
}

/** Throws a TypeError naming the first problem; analysis code relies on a valid shape. */
export function assertSeries(series: CycleSeries): void {
	const problems = validateSeries(series);
	if (problems.length > 0) throw new TypeError(`invalid cycle series: ${problems.join('; ')}`);
}

export function findChannels(series: CycleSeries, role: ChannelRole): SeriesChannel[] {
	return series.channels.filter((c) => c.role === role);
}

/**
 * Per-sample combination of all channels of a role ('mean' of shelf inlets, 'max' of product
 * probes for the worst case ...), skipping NaN; NaN where no channel has a reading. Null when
 * the series has no channel of that role.
 */
export function combineChannels(
	series: CycleSeries,
	role: ChannelRole,
	how: 'mean' | 'max' | 'min'
): Float64Array | null {
	const chans = findChannels(series, role);
	if (chans.length === 0) return null;
	if (chans.length === 1) return chans[0].values;
	const n = series.t.length;
	const out = new Float64Array(n);
	for (let i = 0; i < n; i++) {
		let acc = how === 'max' ? -Infinity : how === 'min' ? Infinity : 0;
		let count = 0;
		for (const c of chans) {
			const v = c.values[i];
			if (Number.isNaN(v)) continue;
			count++;
			if (how === 'max') acc = v > acc ? v : acc;
			else if (how === 'min') acc = v < acc ? v : acc;
			else acc += v;
		}
		out[i] = count === 0 ? NaN : how === 'mean' ? acc / count : acc;
	}
	return out;
}

/** Median spacing of the time axis (s); robust to gaps. 0 for fewer than two samples. */
export function estimateSampleInterval(t: Float64Array): number {
	const n = t.length;
	if (n < 2) return 0;
	// Sub-sample long series: the median of up to 4 096 spacings spread over the log.
	const stride = Math.max(1, Math.floor((n - 1) / 4096));
	const diffs: number[] = [];
	for (let i = 1; i < n; i += stride) diffs.push(t[i] - t[i - 1]);
	diffs.sort((a, b) => a - b);
	return diffs[Math.floor(diffs.length / 2)];
}

/** First index i with t[i] ≥ x (t.length if none); binary search on the sorted axis. */
export function searchTimeIndex(t: Float64Array, x: number): number {
	let lo = 0;
	let hi = t.length;
	while (lo < hi) {
		const mid = (lo + hi) >>> 1;
		if (t[mid] < x) lo = mid + 1;
		else hi = mid;
	}
	return lo;
}

/** First index i with t[i] > x (t.length if none). */
export function searchTimeIndexAfter(t: Float64Array, x: number): number {
	let lo = 0;
	let hi = t.length;
	while (lo < hi) {
		const mid = (lo + hi) >>> 1;
		if (t[mid] <= x) lo = mid + 1;
		else hi = mid;
	}
	return lo;
}

export interface DownsampledChannel {
	t: Float64Array;
	v: Float64Array;
}

/**
 * Min/max down-sampling of one channel for charting (the min/max half of the M4 aggregation of
 * Jugel et al., "M4: A Visualization-Oriented Time Series Data Aggregation", PVLDB 7(10), 2014):
 * the window [from, to] is cut into ⌊maxPoints/2⌋ buckets of equal time width and each bucket
 * contributes its minimum and its maximum sample, in time order. Every local extreme that
 * matters at chart resolution therefore survives, including single-sample spikes, which a mean
 * or a stride would hide. Samples are returned unmodified (no averaging).
 *
 * NaN: skipped inside a bucket; a bucket holding samples but no finite value yields one NaN
 * point at its first sample, so a chart draws the gap instead of bridging it.
 * When the window holds ≤ maxPoints samples they are returned as they are (copied).
 */
export function downsampleMinMax(
	t: Float64Array,
	v: Float64Array,
	from: number,
	to: number,
	maxPoints: number
): DownsampledChannel {
	if (!(maxPoints >= 2)) throw new RangeError('maxPoints must be ≥ 2');
	const i0 = searchTimeIndex(t, from);
	const i1 = searchTimeIndexAfter(t, to); // exclusive
	const count = Math.max(0, i1 - i0);
	if (count <= maxPoints) return { t: t.slice(i0, i0 + count), v: v.slice(i0, i0 + count) };
	const buckets = Math.floor(maxPoints / 2);
	const t0 = t[i0];
	const span = t[i1 - 1] - t0;
	const width = span / buckets;
	const outT = new Float64Array(buckets * 2);
	const outV = new Float64Array(buckets * 2);
	let k = 0;
	let i = i0;
	for (let b = 0; b < buckets && i < i1; b++) {
		const end = b === buckets - 1 ? Infinity : t0 + (b + 1) * width;
		const first = i;
		let iMin = -1;
		let iMax = -1;
		for (; i < i1 && t[i] < end; i++) {
			const x = v[i];
			if (Number.isNaN(x)) continue;
			if (iMin < 0 || x < v[iMin]) iMin = i;
			if (iMax < 0 || x > v[iMax]) iMax = i;
		}
		if (i === first) continue; // empty bucket (a time gap)
		if (iMin < 0) {
			outT[k] = t[first];
			outV[k++] = NaN;
			continue;
		}
		const a = Math.min(iMin, iMax);
		const c = Math.max(iMin, iMax);
		outT[k] = t[a];
		outV[k++] = v[a];
		if (c !== a) {
			outT[k] = t[c];
			outV[k++] = v[c];
		}
	}
	return { t: outT.slice(0, k), v: outV.slice(0, k) };
}

export interface DownsampledSeries {
	t: Float64Array;
	/** one array per input channel, aligned with t, in the order of series.channels */
	values: Float64Array[];
}

/**
 * Min/max down-sampling of all channels onto one shared time axis (what uPlot needs). Each
 * bucket gives two rows, at the times of its first and last sample; for each channel those two
 * rows hold its bucket minimum and maximum in the order in which they occurred. Extremes are
 * kept exactly; their time is displaced by less than one bucket width (one chart pixel column
 * when maxPoints ≈ 2 × chart width). NaN where a channel has no finite value in a bucket.
 */
export function downsampleSeries(
	series: CycleSeries,
	from: number,
	to: number,
	maxPoints: number
): DownsampledSeries {
	if (!(maxPoints >= 2)) throw new RangeError('maxPoints must be ≥ 2');
	const { t } = series;
	const i0 = searchTimeIndex(t, from);
	const i1 = searchTimeIndexAfter(t, to);
	const count = Math.max(0, i1 - i0);
	if (count <= maxPoints) {
		return {
			t: t.slice(i0, i0 + count),
			values: series.channels.map((c) => c.values.slice(i0, i0 + count))
		};
	}
	const buckets = Math.floor(maxPoints / 2);
	const t0 = t[i0];
	const width = (t[i1 - 1] - t0) / buckets;
	// Bucket boundaries in index space, shared by all channels.
	const starts: number[] = [];
	const ends: number[] = [];
	let i = i0;
	for (let b = 0; b < buckets && i < i1; b++) {
		const end = b === buckets - 1 ? Infinity : t0 + (b + 1) * width;
		const first = i;
		while (i < i1 && t[i] < end) i++;
		if (i > first) {
			starts.push(first);
			ends.push(i);
		}
	}
	const rows = starts.length * 2;
	const outT = new Float64Array(rows);
	for (let b = 0; b < starts.length; b++) {
		outT[2 * b] = t[starts[b]];
		// A one-sample bucket gives the same time twice; uPlot accepts equal x values.
		outT[2 * b + 1] = t[ends[b] - 1];
	}
	const values = series.channels.map((c) => {
		const out = new Float64Array(rows);
		const v = c.values;
		for (let b = 0; b < starts.length; b++) {
			let iMin = -1;
			let iMax = -1;
			for (let j = starts[b]; j < ends[b]; j++) {
				const x = v[j];
				if (Number.isNaN(x)) continue;
				if (iMin < 0 || x < v[iMin]) iMin = j;
				if (iMax < 0 || x > v[iMax]) iMax = j;
			}
			if (iMin < 0) {
				out[2 * b] = NaN;
				out[2 * b + 1] = NaN;
			} else if (iMin <= iMax) {
				out[2 * b] = v[iMin];
				out[2 * b + 1] = v[iMax];
			} else {
				out[2 * b] = v[iMax];
				out[2 * b + 1] = v[iMin];
			}
		}
		return out;
	});
	return { t: outT, values };
}
