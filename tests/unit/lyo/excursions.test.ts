import { describe, expect, it } from 'vitest';
import { createBands, findExcursions, type Bands } from '$lib/domain/lyo/excursions';

const f64 = (xs: number[]) => Float64Array.from(xs);
const t10 = (n: number) => Float64Array.from({ length: n }, (_, i) => i * 10);
function band(n: number, lo: number, hi: number): Bands {
	const b = createBands(n);
	b.lower.fill(lo);
	b.upper.fill(hi);
	return b;
}
const all = { minDurationS: 0, maxGapS: 300 };

describe('findExcursions', () => {
	it('interpolates the limit crossings at both ends', () => {
		// band −1…1; 0 → 2 between t = 10 and 20 crosses 1 at 15 s; 2 → 0 between 40 and 50 at 45 s
		const v = f64([0, 0, 2, 3, 2, 0, 0]);
		const ex = findExcursions(t10(7), v, band(7, -1, 1), 'shelf', all);
		expect(ex).toEqual([{ channel: 'shelf', kind: 'above', startS: 15, endS: 45, durationS: 30, peak: 3 }]);
	});

	it('reports below-range runs with the minimum as peak', () => {
		// 0 → −3 crosses −1 a third of the way (3⅓ s); −3 → 0 two thirds of the way (36⅔ s)
		const v = f64([0, -3, -5, -3, 0]);
		const [ex, ...rest] = findExcursions(t10(5), v, band(5, -1, 1), 'cm', all);
		expect(rest).toEqual([]);
		expect(ex).toMatchObject({ channel: 'cm', kind: 'below', peak: -5 });
		expect(ex.startS).toBeCloseTo(10 / 3, 12);
		expect(ex.endS).toBeCloseTo(110 / 3, 12);
		expect(ex.durationS).toBeCloseTo(100 / 3, 12);
	});

	it('drops excursions shorter than the minimum duration (common practice: 60 s)', () => {
		const v = f64([0, 2, 2, 0, 0, 0, 2, 2, 2, 2, 2, 2, 2, 2, 0]);
		const ex = findExcursions(t10(15), v, band(15, -1, 1), 'x', { minDurationS: 60, maxGapS: 300 });
		expect(ex.map((e) => [e.startS, e.endS])).toEqual([[55, 135]]);
	});

	it('bridges short NaN gaps, splits at long ones', () => {
		const v = f64([0, 2, NaN, NaN, 2, 0]);
		expect(findExcursions(t10(6), v, band(6, -1, 1), 'x', all).map((e) => [e.startS, e.endS])).toEqual([[5, 45]]);
		const split = findExcursions(t10(6), v, band(6, -1, 1), 'x', { minDurationS: 0, maxGapS: 20 });
		// the first run ends at its last out-of-range reading (no in-range reading follows it)
		expect(split.map((e) => [e.startS, e.endS])).toEqual([[5, 10], [40, 45]]);
	});

	it('ends an excursion where checking stops and ignores unchecked samples', () => {
		const b = band(6, -1, 1);
		b.lower.fill(NaN, 3);
		b.upper.fill(NaN, 3);
		const v = f64([0, 2, 2, 5, 5, 0]);
		expect(findExcursions(t10(6), v, b, 'x', all).map((e) => [e.startS, e.endS, e.peak])).toEqual([[5, 20, 2]]);
	});

	it('checks one side only when the other limit is NaN', () => {
		const b = createBands(4);
		b.upper.fill(10);
		const v = f64([0, -100, 20, 0]);
		expect(findExcursions(t10(4), v, b, 'p', all).map((e) => e.kind)).toEqual(['above']);
	});

	it('finds nothing inside the band', () => {
		expect(findExcursions(t10(5), f64([0, 1, -1, 0.5, 0]), band(5, -1, 1), 'x', all)).toEqual([]);
	});
});
