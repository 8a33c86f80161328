import { describe, expect, it } from 'vitest';
import {
	DEFAULT_ENDPOINT_OPTIONS,
	computeSavitzkyGolayCoefficients,
	detectEndpoint,
	smoothSavitzkyGolay
} from '$lib/domain/lyo/endpoint';
import { createGaussian } from './synthetic';

const scaled = (c: Float64Array, norm: number) => Array.from(c, (x) => Math.round(x * norm * 1e9) / 1e9);

describe('Savitzky–Golay coefficients', () => {
	// Savitzky & Golay (1964), Anal. Chem. 36, 1627, tables of convolution integers (values from
	// memory; widely reproduced, e.g. in Numerical Recipes §14.9 — also from memory).
	it('match the published smoothing integers', () => {
		expect(scaled(computeSavitzkyGolayCoefficients(2, 2, 0), 35)).toEqual([-3, 12, 17, 12, -3]);
		expect(scaled(computeSavitzkyGolayCoefficients(3, 2, 0), 21)).toEqual([-2, 3, 6, 7, 6, 3, -2]);
		expect(scaled(computeSavitzkyGolayCoefficients(4, 2, 0), 231)).toEqual([-21, 14, 39, 54, 59, 54, 39, 14, -21]);
		expect(scaled(computeSavitzkyGolayCoefficients(3, 4, 0), 231)).toEqual([5, -30, 75, 131, 75, -30, 5]);
	});

	it('match the published first-derivative integers', () => {
		expect(scaled(computeSavitzkyGolayCoefficients(2, 2, 1), 10)).toEqual([-2, -1, 0, 1, 2]);
		expect(scaled(computeSavitzkyGolayCoefficients(3, 2, 1), 28)).toEqual([-3, -2, -1, 0, 1, 2, 3]);
		expect(scaled(computeSavitzkyGolayCoefficients(3, 4, 1), 252)).toEqual([22, -67, -58, 0, 58, 67, -22]);
	});

	it('reproduce a polynomial of the filter degree exactly (least-squares identity)', () => {
		const y = Array.from({ length: 60 }, (_, i) => 0.001 * i ** 4 - 0.2 * i ** 3 + i - 7);
		const dy = (i: number) => 0.004 * i ** 3 - 0.6 * i ** 2 + 1;
		const s = smoothSavitzkyGolay(y, computeSavitzkyGolayCoefficients(6, 4, 0));
		const d = smoothSavitzkyGolay(y, computeSavitzkyGolayCoefficients(6, 4, 1));
		for (let i = 6; i < 54; i++) {
			expect(s[i]).toBeCloseTo(y[i], 6);
			expect(d[i]).toBeCloseTo(dy(i), 6);
		}
		expect(s[0]).toBeNaN(); // no full window at the edges
	});
});

/** A ratio trace: 1 + 0.6 / (1 + exp((t − tm)/τ)) with optional relative noise on both gauges. */
function logisticGauges(n: number, dt: number, tm: number, tau: number, noise: number, seed = 7) {
	const g = createGaussian(seed);
	const t = Float64Array.from({ length: n }, (_, i) => i * dt);
	const manometer = Float64Array.from(t, () => 10 * (1 + noise * g()));
	const pirani = Float64Array.from(t, (x, i) => manometer[i] * (1 + 0.6 / (1 + Math.exp((x - tm) / tau))) * (1 + noise * g()));
	return { t, pirani, manometer };
}

describe('detectEndpoint (Patel, Doen & Pikal 2010 construction)', () => {
	it('recovers the analytic midpoint, onset and offset of a clean logistic fall', () => {
		// Logistic fall: steepest at tm with slope −0.6/(4τ); the tangent meets 1.6 at tm − 2τ and
		// 1.0 at tm + 2τ (exact geometry of the curve, see synthetic.ts).
		const tm = 20 * 3600;
		const tau = 2400;
		const { t, pirani, manometer } = logisticGauges(40 * 60, 60, tm, tau, 0);
		const r = detectEndpoint(t, pirani, manometer, 0, t[t.length - 1] + 60);
		expect(r.warnings).toEqual([]);
		expect(r.upperRatio).toBeCloseTo(1.6, 2);
		expect(r.lowerRatio).toBeCloseTo(1.0, 2);
		// tolerances: 30 s on the midpoint, 60 s on onset/offset (measured: 0 s and ≤ 30 s)
		expect(Math.abs((r.endpoint?.midpointS ?? NaN) - tm)).toBeLessThan(30);
		expect(Math.abs((r.endpoint?.onsetS ?? NaN) - (tm - 2 * tau))).toBeLessThan(60);
		expect(Math.abs((r.endpoint?.offsetS ?? NaN) - (tm + 2 * tau))).toBeLessThan(60);
	});

	it('stays within 0.15 τ (midpoint) and 0.2 τ (onset, offset) with 1 % gauge noise', () => {
		const tau = 2400;
		for (const seed of [1, 2, 3, 4]) {
			const tm = 20 * 3600 + seed * 600;
			const { t, pirani, manometer } = logisticGauges(40 * 60, 60, tm, tau, 0.01, seed);
			const e = detectEndpoint(t, pirani, manometer, 0, t[t.length - 1] + 60).endpoint;
			expect(Math.abs((e?.midpointS ?? NaN) - tm)).toBeLessThan(0.15 * tau);
			expect(Math.abs((e?.onsetS ?? NaN) - (tm - 2 * tau))).toBeLessThan(0.2 * tau);
			expect(Math.abs((e?.offsetS ?? NaN) - (tm + 2 * tau))).toBeLessThan(0.2 * tau);
		}
	});

	it('finds no endpoint without a fall, with too small a fall, or when the log ends mid-fall', () => {
		const flat = logisticGauges(2000, 60, 1e9, 2400, 0.01);
		expect(detectEndpoint(flat.t, flat.pirani, flat.manometer, 0, 120_000).endpoint).toBeNull();

		const small = logisticGauges(2400, 60, 72000, 2400, 0.002);
		const smallPirani = Float64Array.from(small.pirani, (p, i) => small.manometer[i] + (p - small.manometer[i]) / 10); // 1.06 → 1.0
		const r = detectEndpoint(small.t, smallPirani, small.manometer, 0, 144_000);
		expect(r.endpoint).toBeNull();
		expect(r.warnings[0]).toMatch(/falls by only 0\.06/);

		const cut = logisticGauges(1240, 60, 72000, 2400, 0.01); // data end 2400 s after the midpoint
		const c = detectEndpoint(cut.t, cut.pirani, cut.manometer, 0, 74_400);
		expect(c.endpoint).toBeNull();
		expect(c.warnings[0]).toMatch(/still falling/);
	});

	it('ignores manometer readings of 0 (off scale at atmospheric pressure)', () => {
		const { t, pirani, manometer } = logisticGauges(40 * 60, 60, 72000, 2400, 0);
		manometer.fill(0, 0, 120);
		pirani.fill(1e5, 0, 120);
		const e = detectEndpoint(t, pirani, manometer, 0, 144_000, DEFAULT_ENDPOINT_OPTIONS).endpoint;
		expect(Math.abs((e?.midpointS ?? NaN) - 72000)).toBeLessThan(30);
	});
});
