import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
	assertSeries,
	combineChannels,
	downsampleMinMax,
	downsampleSeries,
	estimateSampleInterval,
	findChannels,
	searchTimeIndex,
	searchTimeIndexAfter,
	validateSeries,
	type CycleSeries
} from '$lib/domain/lyo/series';

const f64 = (xs: number[]) => Float64Array.from(xs);

function makeSeries(): CycleSeries {
	return {
		t: f64([0, 60, 120, 180]),
		channels: [
			{ id: 'p1', role: 'product', unit: 'degC', values: f64([-40, NaN, -35, NaN]) },
			{ id: 'p2', role: 'product', unit: 'degC', values: f64([-42, -38, NaN, NaN]) },
			{ id: 'cm', role: 'manometer', unit: 'Pa', values: f64([0, 10, 10, 10]) }
		]
	};
}

describe('series model', () => {
	it('accepts a well-formed series', () => {
		expect(validateSeries(makeSeries())).toEqual([]);
		expect(() => assertSeries(makeSeries())).not.toThrow();
	});

	it('names structural problems', () => {
		const s = makeSeries();
		s.t = f64([0, 60, 60, 180]);
		s.channels[0].values = f64([1, 2, 3]);
		s.channels[1].unit = 'Pa';
		s.channels.push({ id: 'cm', role: 'pirani', unit: 'Pa', values: f64([1, 1, 1, 1]) });
		const problems = validateSeries(s);
		expect(problems).toEqual([
			't is not strictly increasing at index 2',
			'channel "p1" has 3 values for 4 times',
			'channel "p2" (product) must be in degC',
			'duplicate channel id "cm"'
		]);
		expect(() => assertSeries(s)).toThrow(TypeError);
	});

	it('combines channels of a role per sample, skipping NaN', () => {
		const s = makeSeries();
		expect(findChannels(s, 'product').map((c) => c.id)).toEqual(['p1', 'p2']);
		expect(Array.from(combineChannels(s, 'product', 'max') as Float64Array)).toEqual([-40, -38, -35, NaN]);
		expect(Array.from(combineChannels(s, 'product', 'mean') as Float64Array)).toEqual([-41, -38, -35, NaN]);
		expect(Array.from(combineChannels(s, 'product', 'min') as Float64Array)).toEqual([-42, -38, -35, NaN]);
		expect(combineChannels(s, 'pirani', 'mean')).toBeNull();
	});

	it('estimates the sample interval robustly to gaps', () => {
		expect(estimateSampleInterval(f64([0, 10, 20, 30, 400, 410, 420]))).toBe(10);
		expect(estimateSampleInterval(f64([5]))).toBe(0);
	});

	it('binary-searches the time axis', () => {
		const t = f64([0, 10, 20, 30]);
		expect(searchTimeIndex(t, 10)).toBe(1);
		expect(searchTimeIndex(t, 11)).toBe(2);
		expect(searchTimeIndexAfter(t, 10)).toBe(2);
		expect(searchTimeIndex(t, 99)).toBe(4);
	});
});

describe('downsampleMinMax', () => {
	const n = 10_000;
	const t = Float64Array.from({ length: n }, (_, i) => i);
	const v = Float64Array.from({ length: n }, (_, i) => Math.sin(i / 300));
	v[1234] = 7; // single-sample spike
	v[8765] = -9;

	it('keeps every extreme, including single-sample spikes, within maxPoints', () => {
		const d = downsampleMinMax(t, v, 0, n - 1, 200);
		expect(d.t.length).toBeLessThanOrEqual(200);
		expect(Math.max(...d.v)).toBe(7);
		expect(Math.min(...d.v)).toBe(-9);
		expect(d.t[Array.from(d.v).indexOf(7)]).toBe(1234);
		// time order is kept
		for (let i = 1; i < d.t.length; i++) expect(d.t[i]).toBeGreaterThan(d.t[i - 1]);
	});

	it('returns samples unmodified and a small window as it is', () => {
		const d = downsampleMinMax(t, v, 100, 149, 200);
		expect(Array.from(d.t)).toEqual(Array.from(t.subarray(100, 150)));
		expect(Array.from(d.v)).toEqual(Array.from(v.subarray(100, 150)));
	});

	it('marks a bucket without readings as a gap (NaN), not a bridge', () => {
		const w = Float64Array.from(v);
		w.fill(NaN, 5000, 6000);
		const d = downsampleMinMax(t, w, 0, n - 1, 100);
		const gapPoints = Array.from(d.t).filter((_, i) => Number.isNaN(d.v[i]));
		expect(gapPoints.length).toBeGreaterThan(0);
		for (const x of gapPoints) expect(x >= 5000 && x < 6000).toBe(true);
	});

	it('property: output ⊆ input, ≤ maxPoints, extremes of the window kept', () => {
		fc.assert(
			fc.property(
				fc.array(fc.double({ min: -1e3, max: 1e3, noNaN: true }), { minLength: 1, maxLength: 400 }),
				fc.integer({ min: 2, max: 60 }),
				(xs, maxPoints) => {
					const tt = Float64Array.from(xs, (_, i) => i * 2);
					const vv = Float64Array.from(xs);
					const d = downsampleMinMax(tt, vv, 0, tt[tt.length - 1], maxPoints);
					expect(d.t.length).toBeLessThanOrEqual(maxPoints);
					for (let i = 0; i < d.t.length; i++) expect(vv[d.t[i] / 2]).toBe(d.v[i]);
					expect(Math.max(...d.v)).toBe(Math.max(...xs));
					expect(Math.min(...d.v)).toBe(Math.min(...xs));
				}
			)
		);
	});

	it('rejects maxPoints < 2', () => {
		expect(() => downsampleMinMax(t, v, 0, 10, 1)).toThrow(RangeError);
	});
});

describe('downsampleSeries', () => {
	it('gives one shared axis and keeps each channel’s extremes', () => {
		const n = 5000;
		const t = Float64Array.from({ length: n }, (_, i) => i * 10);
		const a = Float64Array.from({ length: n }, (_, i) => Math.cos(i / 100));
		const b = Float64Array.from({ length: n }, (_, i) => (i === 4321 ? 50 : i / 1000));
		b[100] = NaN;
		const s: CycleSeries = {
			t,
			channels: [
				{ id: 'a', role: 'shelf', unit: 'degC', values: a },
				{ id: 'b', role: 'manometer', unit: 'Pa', values: b }
			]
		};
		const d = downsampleSeries(s, 0, t[n - 1], 300);
		expect(d.t.length).toBeLessThanOrEqual(300);
		expect(d.values.map((x) => x.length)).toEqual([d.t.length, d.t.length]);
		expect(Math.max(...d.values[0])).toBe(Math.max(...a));
		expect(Math.min(...d.values[0])).toBe(Math.min(...a));
		expect(Math.max(...d.values[1].filter((x) => !Number.isNaN(x)))).toBe(50);
		for (let i = 1; i < d.t.length; i++) expect(d.t[i]).toBeGreaterThanOrEqual(d.t[i - 1]);
	});
});
