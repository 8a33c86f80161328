import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { round as mathjsRound } from 'mathjs';
import {
	ceilToDecimals,
	checkChoice,
	checkEquipmentItem,
	checkLot,
	checkReported,
	checkValue,
	checkYesNo,
	decimalsOf,
	floorToDecimals,
	formatFixed,
	parseEntry,
	resolveBounds,
	roundHalfAwayFromZero,
	tightenBounds
} from '$lib/domain/limits';

describe('rounding of calculated values (USP General Notices 7.20, from memory: 5 and above rounds up)', () => {
	it('rounds on the decimal text, half away from zero', () => {
		expect(roundHalfAwayFromZero(1.005, 2)).toBe(1.01); // binary 1.00499999999999989… would give 1.00
		expect(roundHalfAwayFromZero(2.675, 2)).toBe(2.68);
		expect(roundHalfAwayFromZero(1.45, 1)).toBe(1.5);
		expect(roundHalfAwayFromZero(-2.5, 0)).toBe(-3);
		expect(roundHalfAwayFromZero(0.0004, 2)).toBe(0);
		expect(roundHalfAwayFromZero(0.005, 2)).toBe(0.01);
		expect(roundHalfAwayFromZero(9.995, 2)).toBe(10);
		expect(roundHalfAwayFromZero(1.2000000000000002, 3)).toBe(1.2);
		expect(roundHalfAwayFromZero(1e-7, 6)).toBe(0);
		expect(roundHalfAwayFromZero(123456.5, 0)).toBe(123457);
		expect(Object.is(roundHalfAwayFromZero(-0.001, 2), 0)).toBe(true); // no "-0.00"
	});

	it('agrees with mathjs round() (a reference library) on decimal values', () => {
		fc.assert(
			fc.property(fc.integer({ min: -10_000_000, max: 10_000_000 }), fc.integer({ min: 1, max: 6 }), fc.integer({ min: 0, max: 5 }), (m, k, d) => {
				const x = Number(`${m}e-${k}`); // a value with a short decimal text, as entered or computed
				const ref = mathjsRound(x, d);
				expect(roundHalfAwayFromZero(x, d)).toBe(ref === 0 ? 0 : ref); // we never give −0 (shown as "-0.00")
			})
		);
	});

	it('is not misled by binary noise of arithmetic', () => {
		expect(0.285 * 100).toBe(28.499999999999996); // the noise (IEEE 754 double arithmetic)
		expect(roundHalfAwayFromZero(0.285 * 100, 0)).toBe(29);
		expect(mathjsRound(0.285 * 100, 0)).toBe(29); // mathjs agrees here
		// At some exact ties mathjs does not: 75.585 × 99.993 = 7557.970905 exactly, 7557.970904999999 in binary.
		expect(75.585 * 99.993).toBe(7557.970904999999);
		expect(roundHalfAwayFromZero(75.585 * 99.993, 5)).toBe(7557.97091);
		expect(mathjsRound(75.585 * 99.993, 5)).toBe(7557.9709);
		// Reference: exact decimal arithmetic with BigInt on products of 3-decimal values.
		fc.assert(
			fc.property(fc.integer({ min: -99_999, max: 99_999 }), fc.integer({ min: 1, max: 99_999 }), fc.integer({ min: 0, max: 5 }), (a, b, d) => {
				const x = (a / 1000) * (b / 1000);
				const q = BigInt(Math.abs(a)) * BigInt(b); // |x| · 10⁶ exactly
				const scale = 10n ** BigInt(6 - d);
				const r = (q + scale / 2n) / scale; // half away from zero
				const exact = Number(`${r}e-${d}`);
				expect(roundHalfAwayFromZero(x, d)).toBe(a < 0 && exact !== 0 ? -exact : exact);
			})
		);
	});

	it('counts decimals of the shortest decimal text', () => {
		expect(decimalsOf(0.25)).toBe(2);
		expect(decimalsOf(1200)).toBe(0);
		expect(decimalsOf(1e-7)).toBe(7);
		expect(decimalsOf(-3.125)).toBe(3);
	});

	it('formats with exactly the places asked for', () => {
		expect(formatFixed(1.005, 2)).toBe('1.01');
		expect(formatFixed(2, 3)).toBe('2.000');
		expect(formatFixed(-0.0001, 2)).toBe('0.00');
	});

	it('ceils and floors exactly on the decimal text', () => {
		expect(ceilToDecimals(9.2664, 2)).toBe(9.27);
		expect(floorToDecimals(9.4536, 2)).toBe(9.45);
		expect(ceilToDecimals(-9.2664, 2)).toBe(-9.26);
		expect(floorToDecimals(-9.2664, 2)).toBe(-9.27);
		expect(ceilToDecimals(0.3, 1)).toBe(0.3);
	});
});

describe('entered values are judged as entered', () => {
	it('reads numbers as typed, with a decimal point or comma', () => {
		expect(parseEntry('600.0', 1)).toEqual({ ok: true, value: 600, decimals: 1 });
		expect(parseEntry('1,128', 3)).toEqual({ ok: true, value: 1.128, decimals: 3 });
		expect(parseEntry(' -4 ', 0)).toEqual({ ok: true, value: -4, decimals: 0 });
	});

	it('refuses more decimals than the field records, instead of rounding them away', () => {
		expect(parseEntry('600.05', 1)).toMatchObject({ ok: false, code: 'too-many-decimals', message: 'enter at most 1 decimal' });
	});

	it('refuses what is not a plain number', () => {
		for (const t of ['', 'abc', '1e3', '1 000', '1.2.3', '0x10', '12 g', 'Infinity', 'NaN']) {
			expect(parseEntry(t, 3).ok, t).toBe(false);
		}
	});

	it('judges min/max inclusively', () => {
		const b = { min: 5.8, max: 6.2 };
		expect(checkValue(5.8, b)).toBe('within');
		expect(checkValue(6.2, b)).toBe('within');
		expect(checkValue(5.79, b)).toBe('below');
		expect(checkValue(6.21, b)).toBe('above');
		expect(checkValue(-1e9, { max: 2 })).toBe('within');
	});
});

describe('limits resolved to bounds', () => {
	it('computes target ± tolerance in decimal, not binary', () => {
		// 0.3 − 0.1 in binary is 0.19999999999999998; the limit is 0.2
		expect(resolveBounds({ kind: 'tolerance', target: 0.3, tolerance: 0.1 })).toEqual({ min: 0.2, max: 0.4, target: 0.3 });
		expect(checkValue(0.2, resolveBounds({ kind: 'tolerance', target: 0.3, tolerance: 0.1 }))).toBe('within');
	});

	it('computes relative tolerances exactly', () => {
		// 600 g ± 0.5 % = 597.0 … 603.0 g (arithmetic)
		expect(resolveBounds({ kind: 'tolerance', target: 600, tolerance: 0.5, relative: true })).toEqual({ min: 597, max: 603, target: 600 });
		// 9.36 ± 1 % = 9.2664 … 9.4536 (arithmetic)
		expect(resolveBounds({ kind: 'tolerance', target: 9.36, tolerance: 1, relative: true })).toEqual({ min: 9.2664, max: 9.4536, target: 9.36 });
	});

	it('needs a target for a targetFrom limit', () => {
		expect(() => resolveBounds({ kind: 'tolerance', targetFrom: 'x', tolerance: 1 })).toThrow(/no target/);
		expect(resolveBounds({ kind: 'tolerance', targetFrom: 'x', tolerance: 1 }, 10)).toEqual({ min: 9, max: 11, target: 10 });
	});

	it('tightens bounds to the field decimals without changing any judgement', () => {
		const exact = { min: 9.2664, max: 9.4536 };
		const tight = tightenBounds(exact, 2);
		expect(tight).toMatchObject({ min: 9.27, max: 9.45 });
		fc.assert(
			fc.property(fc.integer({ min: 900, max: 960 }), (cents) => {
				const v = cents / 100; // every value a 2-decimal field can hold near the bounds
				expect(checkValue(v, tight)).toBe(checkValue(v, exact));
			})
		);
	});

	it('judges a calculated value by its reported (rounded) value', () => {
		// 2.0049 shows as 2.00, which is within max 2.00; 2.005 shows as 2.01, above.
		expect(checkReported(2.0049, { max: 2 }, 2)).toEqual({ reported: 2, status: 'within' });
		expect(checkReported(2.005, { max: 2 }, 2)).toEqual({ reported: 2.01, status: 'above' });
	});
});

describe('choices and yes/no checks', () => {
	it('flags an unacceptable choice or answer', () => {
		expect(checkChoice(['clear'], ['clear', 'opalescent'])).toBe('within');
		expect(checkChoice(['clear', 'particles'], ['clear', 'opalescent'])).toBe('unacceptable');
		expect(checkChoice(['anything'])).toBe('within');
		expect(checkYesNo(true, true)).toBe('within');
		expect(checkYesNo(false, true)).toBe('unacceptable');
		expect(checkYesNo(false)).toBe('within');
	});
});

describe('material lots and equipment checked at entry (synthetic facts)', () => {
	const field = { itemCode: 'EXC-0101' };
	const lot = { itemCode: 'EXC-0101', status: 'released', expiresOn: '2026-03-31' };

	it('accepts a released lot of the item up to and on its expiry date', () => {
		expect(checkLot(field, lot, '2026-03-30')).toEqual([]);
		expect(checkLot(field, lot, '2026-03-31')).toEqual([]);
	});

	it('names every problem of a lot', () => {
		expect(checkLot(field, lot, '2026-04-01')).toEqual(['expired']);
		expect(checkLot(field, { ...lot, itemCode: 'EXC-0102', status: 'quarantine' }, '2026-04-01')).toEqual(['wrong-item', 'not-released', 'expired']);
		expect(checkLot(field, { ...lot, status: 'rejected' }, '2026-01-01')).toEqual(['not-released']);
		expect(() => checkLot(field, lot, '1.4.2026')).toThrow(RangeError);
	});

	it('checks equipment class, status and calibration', () => {
		const eq = { equipmentClass: 'balance-6kg', status: 'in-service', calibrationDueOn: '2026-06-30' };
		const f = { equipmentClass: 'balance-6kg' };
		expect(checkEquipmentItem(f, eq, '2026-06-30')).toEqual([]);
		expect(checkEquipmentItem(f, eq, '2026-07-01')).toEqual(['calibration-overdue']);
		expect(checkEquipmentItem(f, { ...eq, status: 'cleaning-due', equipmentClass: 'capper' }, '2026-01-01')).toEqual(['wrong-class', 'not-in-service']);
		expect(checkEquipmentItem(f, { ...eq, calibrationDueOn: null }, '2030-01-01')).toEqual([]);
	});
});
