/**
 * A coarse min/max overview of a whole run, computed once at import, from which the chart of
 * the whole run is served without reading every sample.
 *
 * The overview is downsampleSeries (./series.ts) over the whole log with OVERVIEW_BUCKETS
 * buckets, keeping for each row the sample index and the bucket number. Because the bucket
 * count is a power of two, k = 2^j consecutive overview buckets are exactly one bucket of
 * downsampleSeries with OVERVIEW_BUCKETS / k buckets (the same equal-width edges, to the bit),
 * and min/max of mins/maxes is the min/max of the samples: `downsampleOverview` therefore
 * returns exactly what downsampleSeries would return on the raw samples for that bucket count
 * (tests/unit/lyo/overview.test.ts checks equality). Row sample indices also bound the slice of
 * raw samples a zoom window needs (`overviewSliceBounds`).
 */
import { downsampleSeries, searchTimeIndex, searchTimeIndexAfter, type CycleSeries, type DownsampledSeries } from './series';

/** Power of two (see above); 2 × 2048 rows ≈ one row per pixel column of a wide chart. */
export const OVERVIEW_BUCKETS = 2048;

export interface SeriesOverview {
	/** bucket count, or 0 when the run is short enough that the rows are its raw samples */
	buckets: number;
	/** samples of the whole run */
	samples: number;
	t: Float64Array;
	/** sample index of each row */
	index: Float64Array;
	/** bucket number of each row (−1 for raw rows) */
	bucket: Float64Array;
	/** one column per channel, in series.channels order */
	values: Float64Array[];
}

/** The bucket count of the overview of a run of n samples (0: short enough to keep raw). */
export function overviewBucketsFor(n: number, buckets = OVERVIEW_BUCKETS): number {
	return n <= 2 * buckets ? 0 : buckets;
}

export function buildOverview(series: CycleSeries, buckets = OVERVIEW_BUCKETS): SeriesOverview {
	if (!(buckets >= 1) || (buckets & (buckets - 1)) !== 0) throw new RangeError('overview buckets must be a power of two');
	const { t } = series;
	const n = t.length;
	if (overviewBucketsFor(n, buckets) === 0) {
		const index = new Float64Array(n);
		for (let i = 0; i < n; i++) index[i] = i;
		return { buckets: 0, samples: n, t: t.slice(), index, bucket: new Float64Array(n).fill(-1), values: series.channels.map((c) => c.values.slice()) };
	}
	const t0 = t[0];
	const width = (t[n - 1] - t0) / buckets;
	// The same bucket edges as downsampleSeries(series, t0, t[n-1], 2 × buckets).
	const down: DownsampledSeries = downsampleSeries(series, t0, t[n - 1], 2 * buckets);
	const rows = down.t.length;
	const index = new Float64Array(rows);
	const bucket = new Float64Array(rows);
	let i = 0;
	let r = 0;
	for (let b = 0; b < buckets && i < n; b++) {
		const end = b === buckets - 1 ? Infinity : t0 + (b + 1) * width;
		const first = i;
		while (i < n && t[i] < end) i++;
		if (i === first) continue;
		index[r] = first;
		bucket[r++] = b;
		index[r] = i - 1;
		bucket[r++] = b;
	}
	if (r !== rows) throw new Error('overview rows do not line up with the down-sampled series');
	return { buckets, samples: n, t: down.t, index, bucket, values: down.values };
}

/**
 * The number of chart points the overview of `buckets` buckets gives for a whole-run request of
 * maxPoints (≥ 2): 2 × the largest power-of-two group count that fits (maxPoints itself for a
 * short run, whose overview rows are its raw samples).
 */
export function overviewPoints(buckets: number, maxPoints: number): number {
	if (buckets === 0) return maxPoints;
	let groups = buckets;
	while (groups > 1 && 2 * groups > maxPoints) groups /= 2;
	return 2 * groups;
}

/**
 * The whole run down-sampled to overviewPoints(overview, maxPoints) points: equal to
 * downsampleSeries(raw, first, last, that many points) on the raw samples. `channels` picks
 * columns of the overview (indices into its channel order).
 */
export function downsampleOverview(overview: SeriesOverview, maxPoints: number, channels: readonly number[]): DownsampledSeries {
	if (!(maxPoints >= 2)) throw new RangeError('maxPoints must be ≥ 2');
	const { t } = overview;
	const rows = t.length;
	if (overview.buckets === 0) {
		const raw: CycleSeries = { t, channels: channels.map((k) => ({ id: String(k), role: 'other', unit: null, values: overview.values[k] })) };
		return rows ? downsampleSeries(raw, t[0], t[rows - 1], maxPoints) : { t: new Float64Array(0), values: channels.map(() => new Float64Array(0)) };
	}
	const k = overview.buckets / (overviewPoints(overview.buckets, maxPoints) / 2);
	// Row ranges of each group of k overview buckets (empty groups are skipped, as downsampleSeries skips empty buckets).
	const starts: number[] = [];
	const ends: number[] = [];
	for (let r = 0; r < rows; ) {
		const g = Math.floor(overview.bucket[r] / k);
		const first = r;
		while (r < rows && Math.floor(overview.bucket[r] / k) === g) r++;
		starts.push(first);
		ends.push(r);
	}
	const outT = new Float64Array(starts.length * 2);
	for (let g = 0; g < starts.length; g++) {
		outT[2 * g] = t[starts[g]];
		outT[2 * g + 1] = t[ends[g] - 1];
	}
	const values = channels.map((c) => {
		const v = overview.values[c];
		const out = new Float64Array(starts.length * 2);
		for (let g = 0; g < starts.length; g++) {
			// Strict comparisons keep the earliest row of a tied extreme, as downsampleSeries keeps the earliest sample.
			let rMin = -1;
			let rMax = -1;
			for (let r = starts[g]; r < ends[g]; r++) {
				const x = v[r];
				if (Number.isNaN(x)) continue;
				if (rMin < 0 || x < v[rMin]) rMin = r;
				if (rMax < 0 || x > v[rMax]) rMax = r;
			}
			if (rMin < 0) {
				out[2 * g] = NaN;
				out[2 * g + 1] = NaN;
			} else if (rMin <= rMax) {
				out[2 * g] = v[rMin];
				out[2 * g + 1] = v[rMax];
			} else {
				out[2 * g] = v[rMax];
				out[2 * g + 1] = v[rMin];
			}
		}
		return out;
	});
	return { t: outT, values };
}

/**
 * A slice [lo, hi) of sample indices that holds every sample in [from, to]: the raw samples a
 * zoom window needs, found from the overview's row indices without reading the time axis.
 */
export function overviewSliceBounds(overview: SeriesOverview, from: number, to: number): { lo: number; hi: number } {
	const { t, index } = overview;
	// Rows are samples: the row before the first row ≥ from is a sample before the window.
	const a = searchTimeIndex(t, from);
	const lo = a === 0 ? 0 : index[a - 1] + 1;
	const b = searchTimeIndexAfter(t, to);
	const hi = b >= t.length ? overview.samples : index[b];
	return { lo, hi: Math.max(lo, hi) };
}
