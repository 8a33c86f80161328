/**
 * The stored overview (domain/lyo/overview.ts) must give exactly what min/max down-sampling of
 * the raw samples gives (downsampleSeries, after Jugel et al., "M4", PVLDB 7(10), 2014, min/max
 * half) — the reference here is our own tested downsampleSeries run on the raw samples.
 * Inputs are invented (random walks with gaps, NaN runs and ties).
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { buildOverview, downsampleOverview, overviewPoints, overviewSliceBounds } from '$lib/domain/lyo/overview';
import { downsampleSeries, searchTimeIndex, searchTimeIndexAfter, type CycleSeries } from '$lib/domain/lyo/series';

/** An invented series: irregular steps with a long gap, a NaN run, and rounded (tied) values. */
function makeSeries(n: number, seed: number): CycleSeries {
	let s = seed >>> 0 || 1;
	const rand = () => ((s = (s * 1664525 + 1013904223) >>> 0) / 2 ** 32);
	const t = new Float64Array(n);
	for (let i = 1; i < n; i++) t[i] = t[i - 1] + (i === Math.floor(n / 3) ? 5000 : 1 + Math.floor(rand() * 3));
	const walk = (scale: number, round: number) => {
		const v = new Float64Array(n);
		let x = 0;
		for (let i = 0; i < n; i++) {
			x += (rand() - 0.5) * scale;
			v[i] = Math.round(x * round) / round;
		}
		return v;
	};
	const a = walk(1, 1); // coarse rounding: many ties
	const b = walk(0.1, 1000);
	for (let i = Math.floor(n / 2); i < Math.floor(n / 2) + 300 && i < n; i++) b[i] = NaN;
	return { t, channels: [ { id: 'a', role: 'shelf', unit: 'degC', values: a }, { id: 'b', role: 'manometer', unit: 'Pa', values: b } ] };
}

describe('series overview', () => {
	it('gives exactly the raw min/max down-sampling for every power-of-two bucket count', () => {
		const series = makeSeries(20_000, 11);
		const ov = buildOverview(series, 1024);
		expect(ov.buckets).toBe(1024);
		const n = series.t.length;
		for (const maxPoints of [2, 3, 100, 513, 1000, 2048, 4000, 6000]) {
			const points = overviewPoints(ov.buckets, maxPoints);
			expect(points).toBeLessThanOrEqual(Math.max(2, maxPoints));
			const got = downsampleOverview(ov, maxPoints, [0, 1]);
			const want = downsampleSeries(series, series.t[0], series.t[n - 1], points);
			expect(Array.from(got.t)).toEqual(Array.from(want.t));
			expect(got.values.map((v) => Array.from(v))).toEqual(want.values.map((v) => Array.from(v)));
		}
	});

	it('holds for random series (property)', () => {
		fc.assert(
			fc.property(fc.integer({ min: 600, max: 5000 }), fc.integer({ min: 1, max: 2 ** 31 }), fc.integer({ min: 2, max: 700 }), (n, seed, maxPoints) => {
				const series = makeSeries(n, seed);
				const ov = buildOverview(series, 128);
				const points = overviewPoints(ov.buckets, maxPoints);
				const got = downsampleOverview(ov, maxPoints, [1]);
				const want = downsampleSeries({ t: series.t, channels: [series.channels[1]] }, series.t[0], series.t[n - 1], points);
				expect(Array.from(got.t)).toEqual(Array.from(want.t));
				expect(Array.from(got.values[0])).toEqual(Array.from(want.values[0]));
			}),
			{ numRuns: 60 }
		);
	});

	it('keeps a short run raw and down-samples it like the raw series', () => {
		const series = makeSeries(300, 5);
		const ov = buildOverview(series, 256);
		expect(ov.buckets).toBe(0);
		expect(Array.from(ov.t)).toEqual(Array.from(series.t));
		const got = downsampleOverview(ov, 100, [0]);
		const want = downsampleSeries({ t: series.t, channels: [series.channels[0]] }, series.t[0], series.t[299], 100);
		expect(Array.from(got.values[0])).toEqual(Array.from(want.values[0]));
	});

	it('bounds the raw slice of any window: every sample of the window is inside', () => {
		const series = makeSeries(20_000, 3);
		const ov = buildOverview(series, 512);
		const { t } = series;
		fc.assert(
			fc.property(fc.double({ min: -100, max: t[t.length - 1] + 100, noNaN: true }), fc.double({ min: 1, max: 20_000, noNaN: true }), (from, width) => {
				const to = from + width;
				const { lo, hi } = overviewSliceBounds(ov, from, to);
				const i0 = searchTimeIndex(t, from);
				const i1 = searchTimeIndexAfter(t, to);
				if (i1 > i0) {
					expect(lo).toBeLessThanOrEqual(i0);
					expect(hi).toBeGreaterThanOrEqual(i1);
				}
				// and no more than about two overview buckets of samples beyond the window
				expect(hi - lo - Math.max(0, i1 - i0)).toBeLessThanOrEqual(2 * (20_000 / 512) * 3 + 2);
			}),
			{ numRuns: 200 }
		);
	});

	it('refuses a bucket count that is not a power of two', () => {
		expect(() => buildOverview(makeSeries(100, 1), 1000)).toThrow(RangeError);
	});
});
