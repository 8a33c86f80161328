import { describe, expect, it } from 'vitest';
import {
	computeMedian,
	findSustainedCrossing,
	locateRamp,
	segmentShelf,
	smoothMovingAverage
} from '$lib/domain/lyo/signal';

const f64 = (xs: number[]) => Float64Array.from(xs);
/** t = 0, 60, … s; a hold at `a`, a linear ramp to `b` over rampS starting at startS, then a hold. */
function rampTrace(n: number, a: number, b: number, startS: number, rampS: number) {
	const t = Float64Array.from({ length: n }, (_, i) => i * 60);
	const v = Float64Array.from(t, (x) => (x <= startS ? a : x >= startS + rampS ? b : a + ((b - a) * (x - startS)) / rampS));
	return { t, v };
}

describe('computeMedian', () => {
	it('skips NaN and averages the middle pair', () => {
		expect(computeMedian([3, NaN, 1, 2])).toBe(2);
		expect(computeMedian([4, 1, 3, 2])).toBe(2.5);
		expect(computeMedian([NaN])).toBeNaN();
	});
});

describe('smoothMovingAverage', () => {
	it('leaves a straight line unchanged away from the ends and skips NaN', () => {
		const t = Float64Array.from({ length: 50 }, (_, i) => i * 10);
		const v = Float64Array.from(t, (x) => 2 * x + 1);
		v[20] = NaN;
		const s = smoothMovingAverage(t, v, 60); // ±30 s = ±3 samples
		for (let i = 3; i < 47; i++) {
			if (Math.abs(i - 20) > 3) expect(s[i]).toBeCloseTo(2 * t[i] + 1, 9);
			else expect(Number.isFinite(s[i])).toBe(true); // the gap is skipped, not propagated
		}
		// at i = 20 the window stays symmetric without the missing sample: still on the line
		expect(s[20]).toBeCloseTo(2 * t[20] + 1, 9);
		// one-sided windows at the ends are biased toward the interior
		expect(s[0]).toBeCloseTo(2 * 15 + 1, 9);
	});
});

describe('findSustainedCrossing', () => {
	it('ignores a one-sample spike and finds the sustained crossing', () => {
		const t = Float64Array.from({ length: 20 }, (_, i) => i * 60);
		const v = f64([0, 0, 9, 0, 0, 0, 0, 6, 6, 6, 6, 6, 6, 6, 6, 6, 6, 6, 6, 6]);
		expect(findSustainedCrossing(t, v, 0, 20, 5, 'up', 300)).toBe(7);
		expect(findSustainedCrossing(t, v, 0, 20, 10, 'up', 300)).toBe(-1);
	});
});

describe('locateRamp', () => {
	it('recovers start, end and rate of an exact linear ramp', () => {
		// −45 → −20 °C in 50 min (0.5 °C/min) from t = 240 min
		const { t, v } = rampTrace(400, -45, -20, 240 * 60, 50 * 60);
		const r = locateRamp(t, v, 0, t.length, -45, -20, 300);
		expect(r).not.toBeNull();
		expect(r?.rateCPerMin).toBeCloseTo(0.5, 9);
		expect(r?.startS).toBeCloseTo(240 * 60, 6);
		expect(r?.endS).toBeCloseTo(290 * 60, 6);
		// 10 % and 90 % reference levels (IEEE Std 181-2011 convention): −42.5 and −22.5 °C
		expect(r?.t10S).toBeCloseTo(245 * 60, 6);
		expect(r?.t90S).toBeCloseTo(285 * 60, 6);
	});

	it('handles a cooling ramp and a window that opens mid-ramp', () => {
		const { t, v } = rampTrace(300, 5, -45, 60 * 60, 100 * 60);
		const full = locateRamp(t, v, 0, t.length, 5, -45, 300);
		expect(full?.rateCPerMin).toBeCloseTo(0.5, 9);
		expect(full?.startS).toBeCloseTo(3600, 6);
		// start the search 20 min into the ramp (at −5 °C, past the 10 % level of 0 °C)
		const late = locateRamp(t, v, 80, t.length, 5, -45, 300);
		expect(late?.rateCPerMin).toBeCloseTo(0.5, 9);
		expect(late?.startS).toBeCloseTo(3600, 6);
	});

	it('is null when the setpoint is never reached', () => {
		const { t, v } = rampTrace(300, -45, -30, 3600, 3600);
		expect(locateRamp(t, v, 0, t.length, -45, -20, 300)).toBeNull();
	});
});

describe('segmentShelf', () => {
	it('finds the holds of a two-step trace at their levels', () => {
		const n = 1000;
		const t = Float64Array.from({ length: n }, (_, i) => i * 60);
		// hold −45 until 200 min, ramp 0.5 °C/min to −20 (250 min), hold to 700 min, ramp 0.2 °C/min to 25 (925), hold
		const v = Float64Array.from(t, (x) => {
			const m = x / 60;
			if (m < 200) return -45;
			if (m < 250) return -45 + 0.5 * (m - 200);
			if (m < 700) return -20;
			if (m < 925) return -20 + 0.2 * (m - 700);
			return 25;
		});
		const holds = segmentShelf(t, v, 0, n).filter((s) => s.kind === 'hold');
		expect(holds.map((h) => h.levelC)).toEqual([-45, -20, 25]);
		// hold boundaries within one 10-min slope window of the true corners
		expect(Math.abs(holds[0].endS / 60 - 200)).toBeLessThanOrEqual(20);
		expect(Math.abs(holds[1].startS / 60 - 250)).toBeLessThanOrEqual(20);
		expect(Math.abs(holds[2].startS / 60 - 925)).toBeLessThanOrEqual(20);
	});
});
