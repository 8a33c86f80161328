import { describe, expect, it } from 'vitest';
import {
	DEFAULT_LEAK_LIMIT_MBAR_L_PER_S,
	checkLeakRate,
	computeLeakRate,
	fitLeakRate,
	selectLeakPoints
} from '$lib/domain/lyo/leak';
import { createGaussian } from './synthetic';

describe('computeLeakRate', () => {
	it('reproduces the worked example', () => {
		// lyophilization.md, "Pressure-rise (leak) test": V = 500 L, ΔP = 0.024 mbar over 600 s → Q = 0.02 mbar·L/s
		expect(computeLeakRate({ volumeL: 500, deltaPmbar: 0.024, deltaTs: 600 })).toBeCloseTo(0.02, 15);
	});

	it('rejects a non-positive volume or duration', () => {
		expect(() => computeLeakRate({ volumeL: 0, deltaPmbar: 0.1, deltaTs: 60 })).toThrow(RangeError);
		expect(() => computeLeakRate({ volumeL: 10, deltaPmbar: 0.1, deltaTs: 0 })).toThrow(RangeError);
	});
});

describe('checkLeakRate', () => {
	it('passes at the limit and fails above it', () => {
		// lyophilization.md: ≤ 2 × 10⁻² mbar·L/s (Parenteral Society TM No. 7, as quoted by secondary sources)
		expect(DEFAULT_LEAK_LIMIT_MBAR_L_PER_S).toBe(0.02);
		const q = computeLeakRate({ volumeL: 500, deltaPmbar: 0.024, deltaTs: 600 });
		expect(checkLeakRate(q, 0.02).passed).toBe(true);
		expect(checkLeakRate(0.021, 0.02)).toEqual({ leakRateMbarLPerS: 0.021, limitMbarLPerS: 0.02, passed: false });
	});
});

describe('fitLeakRate', () => {
	it('matches the NIST StRD "Norris" certified regression values', () => {
		// NIST Statistical Reference Datasets, linear least squares, Norris (lower difficulty):
		// certified B1 = 1.00211681802045, B0 = −0.262323073774029, sd(B1) = 0.429796848199937E−03,
		// R² = 0.999993745883712. Data transcribed from Norris.dat (x as time, y as pressure).
		const x = [
			0.2, 337.4, 118.2, 884.6, 10.1, 226.5, 666.3, 996.3, 448.6, 777.0,
			558.2, 0.4, 0.6, 775.5, 666.9, 338.0, 447.5, 11.6, 556.0, 228.1,
			995.8, 887.6, 120.2, 0.3, 0.3, 556.8, 339.1, 887.2, 999.0, 779.0,
			11.1, 118.3, 229.2, 669.1, 448.9, 0.5
		];
		const y = [
			0.1, 338.8, 118.1, 888.0, 9.2, 228.1, 668.5, 998.5, 449.1, 778.9,
			559.2, 0.3, 0.1, 778.1, 668.8, 339.3, 448.9, 10.8, 557.7, 228.3,
			998.0, 888.8, 119.6, 0.3, 0.6, 557.6, 339.3, 888.0, 998.5, 778.9,
			10.2, 117.6, 228.9, 668.4, 449.2, 0.2
		];
		const fit = fitLeakRate(x.map((tS, i) => ({ tS, pPa: y[i] })), 100);
		expect(fit.n).toBe(36);
		expect(fit.slopePaPerS).toBeCloseTo(1.00211681802045, 12);
		expect(fit.interceptPa).toBeCloseTo(-0.262323073774029, 11);
		expect(fit.slopeStdErrPaPerS).toBeCloseTo(0.429796848199937e-3, 12);
		expect(fit.r2).toBeCloseTo(0.999993745883712, 12);
		// 100 L × slope (Pa/s) / (100 Pa/mbar)
		expect(fit.leakRateMbarLPerS).toBeCloseTo(1.00211681802045, 12);
	});

	it('recovers the worked example from noisy 1 s readings within 1 % (≈ 3.4 standard errors)', () => {
		// Worked example as a rise: 0.024 mbar = 2.4 Pa over 600 s in 500 L; 601 readings 1 s apart
		// with 0.05 Pa Gaussian noise (invented). Expected slope SE = 0.05 / √(n(n² − 1)/12)
		// = 1.18e−5 Pa/s, i.e. 0.3 % of the 4e−3 Pa/s slope.
		const g = createGaussian(11);
		const points = Array.from({ length: 601 }, (_, i) => ({ tS: 36_000 + i, pPa: 10 + (2.4 * i) / 600 + 0.05 * g() }));
		const fit = fitLeakRate(points, 500);
		expect(Math.abs(fit.leakRateMbarLPerS / 0.02 - 1)).toBeLessThan(0.01);
		expect(fit.slopeStdErrPaPerS).toBeGreaterThan(1.0e-5);
		expect(fit.slopeStdErrPaPerS).toBeLessThan(1.35e-5);
	});

	it('skips non-finite readings and needs two distinct times', () => {
		const fit = fitLeakRate([{ tS: 0, pPa: 1 }, { tS: 10, pPa: NaN }, { tS: 20, pPa: 3 }], 50);
		expect(fit.n).toBe(2);
		expect(fit.slopePaPerS).toBeCloseTo(0.1, 12);
		expect(fit.slopeStdErrPaPerS).toBeNaN();
		expect(() => fitLeakRate([{ tS: 5, pPa: 1 }, { tS: 5, pPa: 2 }], 50)).toThrow(RangeError);
	});

	it('selects the readings of a rise-test window', () => {
		const t = Float64Array.from([0, 10, 20, 30, 40]);
		const p = Float64Array.from([5, 6, NaN, 8, 9]);
		expect(selectLeakPoints(t, p, 10, 30)).toEqual([{ tS: 10, pPa: 6 }, { tS: 30, pPa: 8 }]);
	});
});
