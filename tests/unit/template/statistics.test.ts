import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { mean as mathjsMean, std as mathjsStd } from 'mathjs';
import {
	acceptabilityConstant,
	acceptanceValue,
	assessReadings,
	assessUniformity,
	mean,
	percentOfTheoretical,
	referenceValue,
	sampleSd,
	summarize,
	toPercentOf
} from '$lib/domain/statistics';

const CHECK = [98, 99, 100, 101, 102, 100, 99, 101, 100, 100];

describe('summary statistics', () => {
	// lyophilization.md, "In-process statistics": mean 100, sample SD 1.1547005383792515
	it('matches the check values', () => {
		expect(mean(CHECK)).toBe(100);
		expect(sampleSd(CHECK)).toBe(1.1547005383792515);
		expect(summarize(CHECK)).toEqual({ n: 10, mean: 100, sd: 1.1547005383792515, min: 98, max: 102 });
	});

	it('agrees with mathjs mean and std (sample, n − 1) as a reference library', () => {
		fc.assert(
			fc.property(fc.array(fc.double({ min: 0.5, max: 2, noNaN: true }), { minLength: 2, maxLength: 50 }), (xs) => {
				expect(mean(xs)).toBeCloseTo(mathjsMean(xs) as number, 12);
				expect(sampleSd(xs)).toBeCloseTo(mathjsStd(xs) as unknown as number, 12);
			})
		);
	});

	it('keeps precision where a one-pass formula would not', () => {
		// Readings of 1e9 + {4, 7, 13, 16}: SD 5.477225575051661 (exact: sqrt(30)); a naive
		// Σx² − n·x̄² loses it all in doubles.
		expect(sampleSd([1e9 + 4, 1e9 + 7, 1e9 + 13, 1e9 + 16])).toBeCloseTo(Math.sqrt(30), 6);
	});

	it('refuses what it cannot summarise', () => {
		expect(() => mean([])).toThrow(RangeError);
		expect(() => sampleSd([1])).toThrow(RangeError);
		expect(() => mean([1, Number.NaN])).toThrow(RangeError);
		expect(summarize([5]).sd).toBeUndefined();
	});
});

describe('USP <905> acceptance value', () => {
	it('uses k = 2.4 for 10 units and 2.0 for 30 units only', () => {
		expect(acceptabilityConstant(10)).toBe(2.4);
		expect(acceptabilityConstant(30)).toBe(2.0);
		expect(() => acceptabilityConstant(20)).toThrow(/10 or 30/);
	});

	it('clamps the reference value M to 98.5–101.5 % LC', () => {
		expect(referenceValue(100)).toBe(100);
		expect(referenceValue(97)).toBe(98.5);
		expect(referenceValue(105.9)).toBe(101.5);
	});

	// USP <905> FAQ (as quoted in lyophilization.md): X̄ = 105.9, s = 5.0, n = 10 → AV = 16.4 (fails)
	it('gives the USP FAQ value', () => {
		expect(acceptanceValue(105.9, 5.0, 10)).toBeCloseTo(16.4, 10);
	});

	// lyophilization.md check: the ten contents above → AV = 2.7713
	it('gives the check value of lyophilization.md and passes stage 1', () => {
		const r = assessUniformity(CHECK);
		expect(r.av).toBeCloseTo(2.7713, 4);
		expect(r).toMatchObject({ n: 10, k: 2.4, m: 100, reportedAv: 2.8, result: 'pass', outsideL2: [] });
	});

	it('asks for 20 more units when stage 1 fails, and applies L2 at stage 2', () => {
		// Mean 105.9 and SD 5.0 as in the FAQ: ten values with that mean and SD (constructed: 105.9 ± 5·√(0.9))
		const d = 5 * Math.sqrt(0.9);
		const ten = [...Array(5).fill(105.9 - d), ...Array(5).fill(105.9 + d)];
		expect(sampleSd(ten)).toBeCloseTo(5, 10);
		expect(assessUniformity(ten)).toMatchObject({ reportedAv: 16.4, result: 'test-20-more' });
		// 30 units near 100 with one at 74 % (below (1 − 0.25)·M = 75 %, L2 = 25.0): fails on L2
		const thirty = [...Array(29).fill(100), 74];
		const r = assessUniformity(thirty);
		expect(r.outsideL2).toEqual([29]);
		expect(r.result).toBe('fail');
	});
});

describe('repeated readings of a field', () => {
	const spec = { count: 10, decimals: 3, maxSd: 0.01, acceptanceValue: { labelClaim: 1.128 } };
	const bounds = { limits: { min: 1.106, max: 1.15 }, meanLimits: { min: 1.117, max: 1.139 } };

	it('judges each reading, the mean, the SD and the AV', () => {
		const readings = [1.127, 1.129, 1.128, 1.126, 1.131, 1.128, 1.125, 1.13, 1.127, 1.129];
		const r = assessReadings(spec, readings, bounds);
		expect(r.readings.every((x) => x.status === 'within')).toBe(true);
		expect(r.mean).toEqual({ reported: 1.128, status: 'within' });
		expect(r.sd?.status).toBe('within');
		expect(r.uniformity?.result).toBe('pass');
		expect(r.outOfLimits).toBe(false);
		expect(r.complete).toBe(true);
	});

	it('flags a single reading out of limits', () => {
		const readings = [1.127, 1.129, 1.128, 1.126, 1.131, 1.128, 1.125, 1.13, 1.127, 1.101];
		const r = assessReadings(spec, readings, bounds);
		expect(r.readings[9].status).toBe('below');
		expect(r.outOfLimits).toBe(true);
	});

	it('gives no AV before all readings are in', () => {
		const r = assessReadings(spec, [1.127, 1.129, 1.128], bounds);
		expect(r.complete).toBe(false);
		expect(r.uniformity).toBeNull();
	});

	it('converts readings to % of label claim', () => {
		expect(toPercentOf([1.128, 1.1505], 1.128)).toEqual([100, (1.1505 / 1.128) * 100]);
		expect(() => toPercentOf([1], 0)).toThrow(RangeError);
	});
});

describe('percentage of theoretical yield (21 CFR 210.3: actual ÷ theoretical × 100, same phase)', () => {
	it('computes it', () => {
		expect(percentOfTheoretical(10200, 10909)).toBeCloseTo(93.50077917315977, 12);
		expect(percentOfTheoretical(0, 5)).toBe(0);
		expect(() => percentOfTheoretical(5, 0)).toThrow(RangeError);
		expect(() => percentOfTheoretical(-1, 5)).toThrow(RangeError);
	});
});
