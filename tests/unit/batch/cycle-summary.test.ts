import { describe, expect, it } from 'vitest';
import { deviationSequence, formatElapsed, pairExcursionDeviations } from '$lib/domain/batch/cycle-summary';
import type { Excursion } from '$lib/domain/lyo/excursions';

describe('a cycle run in the batch step (cycle-summary.ts)', () => {
	// 1 h = 3600 s, 1 min = 60 s (SI Brochure 9th ed., Table 8); minutes rounded half up (common practice).
	it('formats times from the log start in hours and minutes', () => {
		expect(formatElapsed(20 * 3600 + 5 * 60)).toBe('20 h 05 min');
		expect(formatElapsed(72 * 3600)).toBe('72 h 00 min');
		expect(formatElapsed(35 * 60)).toBe('35 min');
		expect(formatElapsed(90)).toBe('2 min');
		expect(formatElapsed(45)).toBe('45 s');
		expect(formatElapsed(3599.9)).toBe('1 h 00 min');
		expect(formatElapsed(-120)).toBe('−2 min');
		expect(formatElapsed(Number.NaN)).toBe('—');
	});

	const ex = (channel: string, startS: number): Excursion => ({ channel, kind: 'above', startS, endS: startS + 600, durationS: 600, peak: -21 });
	const dev = (n: number) => ({ id: `d${n}`, number: `DEV-2026-${String(n).padStart(4, '0')}`, status: 'open', createdAt: '2026-12-01 10:00:00+00' });

	it('pairs each excursion group with the deviation raised for it, in raising order', () => {
		const a = [ex('shelf-1', 100), ex('shelf-2', 110)];
		const b = [ex('cm', 5000)];
		const { byExcursion, unpaired } = pairExcursionDeviations([a, b], [dev(12), dev(11)]);
		expect(byExcursion.get(a[0])?.number).toBe('DEV-2026-0011');
		expect(byExcursion.get(a[1])?.number).toBe('DEV-2026-0011');
		expect(byExcursion.get(b[0])?.number).toBe('DEV-2026-0012');
		expect(unpaired).toEqual([]);
		expect(deviationSequence('DEV-2026-0012')).toBe(12);
	});

	it('pairs nothing when the counts differ, so no deviation is shown against the wrong excursion', () => {
		const a = [ex('shelf-1', 100)];
		const { byExcursion, unpaired } = pairExcursionDeviations([a], [dev(3), dev(4)]);
		expect(byExcursion.size).toBe(0);
		expect(unpaired.map((d) => d.number)).toEqual(['DEV-2026-0003', 'DEV-2026-0004']);
	});
});
