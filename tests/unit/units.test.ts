import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
	CANONICAL_UNITS,
	QUANTITIES,
	UNITS_BY_QUANTITY,
	canonicalUnitOf,
	convertTemperatureDifference,
	convertUnit,
	formatQuantity,
	fromCanonical,
	isUnit,
	labelUnit,
	listUnits,
	parseUnit,
	quantityOf,
	roundForDisplay,
	toCanonical,
	type Unit
} from '$lib/domain/units';

const ALL_UNITS: Unit[] = QUANTITIES.flatMap((q) => [...UNITS_BY_QUANTITY[q]]);

describe('pressure', () => {
	it('defines Torr exactly as 101 325/760 Pa', () => {
		// lyophilization.md (NIST SP 811 App. B; BIPM SI Brochure): Torr = 101325/760 Pa exactly
		expect(toCanonical(1, 'Torr')).toBe(101325 / 760);
		// 760 Torr = 1 standard atmosphere = 101 325 Pa exactly (NIST SP 811 B.8, atmosphere, standard)
		expect(toCanonical(760, 'Torr')).toBe(101325);
		expect(toCanonical(760_000, 'mTorr')).toBe(101325);
	});

	it('matches the NIST SP 811 App. B.8 factors', () => {
		// NIST SP 811 B.8: torr (Torr) → pascal (Pa) 1.333 224 E+02 (7 significant digits printed)
		expect(toCanonical(1, 'Torr')).toBeCloseTo(133.3224, 4);
		// NIST SP 811 B.8: millibar (mbar) → pascal (Pa) 1.0 E+02 (exact)
		expect(toCanonical(1, 'mbar')).toBe(100);
		// lyophilization.md (BIPM SI Brochure): µbar = 0.1 Pa exactly
		expect(toCanonical(1, 'ubar')).toBe(0.1);
		expect(toCanonical(1000, 'ubar')).toBe(100);
		// NIST SP 811 B.8: bar → pascal 1.0 E+05 (exact); SI prefix kilo 10³ (BIPM SI Brochure Table 7)
		expect(toCanonical(1, 'bar')).toBe(100000);
		expect(toCanonical(3.45, 'bar')).toBe(345000);
		expect(toCanonical(80, 'kPa')).toBe(80000);
		expect(convertUnit(1013.25, 'mbar', 'bar')).toBeCloseTo(1.01325, 12);
		// NIST SP 811 B.8: standard atmosphere = 1.013 25 E+05 Pa = 760 Torr exactly
		expect(convertUnit(760, 'Torr', 'kPa')).toBe(101.325);
	});

	it('reproduces the check values of lyophilization.md', () => {
		// lyophilization.md, Units: 100 mTorr = 13.332237 Pa = 0.133322 mbar
		expect(convertUnit(100, 'mTorr', 'Pa')).toBeCloseTo(13.332237, 6);
		expect(convertUnit(100, 'mTorr', 'mbar')).toBeCloseTo(0.133322, 6);
		// lyophilization.md, Units: 1 mbar = 750.0617 mTorr
		expect(convertUnit(1, 'mbar', 'mTorr')).toBeCloseTo(750.0617, 4);
		// lyophilization.md: 1 Torr = 133.322368421… Pa
		expect(convertUnit(1, 'Torr', 'Pa')).toBeCloseTo(133.322368421, 9);
	});
});

describe('temperature', () => {
	it('reproduces −40 °C = −40 °F = 233.15 K', () => {
		// lyophilization.md, Units (NIST SP 811 §4.2.1.1 and B.9): T/K = t/°C + 273.15, t/°F = 1.8 t/°C + 32
		expect(convertUnit(-40, 'degC', 'degF')).toBe(-40);
		expect(convertUnit(-40, 'degF', 'degC')).toBe(-40);
		expect(convertUnit(-40, 'degC', 'K')).toBeCloseTo(233.15, 12);
		expect(convertUnit(233.15, 'K', 'degF')).toBeCloseTo(-40, 12);
	});

	it('matches NIST SP 811 B.9 fixed points', () => {
		// NIST SP 811 B.9: t/°C = (t/°F − 32)/1.8 → 212 °F = 100 °C, 32 °F = 0 °C
		expect(toCanonical(212, 'degF')).toBe(100);
		expect(toCanonical(32, 'degF')).toBe(0);
		// NIST SP 811 §4.2.1.1: 0 °C = 273.15 K; triple point of water 273.16 K = 0.01 °C
		expect(fromCanonical(0, 'K')).toBe(273.15);
		expect(toCanonical(273.16, 'K')).toBeCloseTo(0.01, 12);
	});

	it('converts temperature differences without the offsets', () => {
		// NIST SP 811 §4.2.1.1: an interval of 1 °C equals 1 K; 1 °F interval = 5/9 K
		expect(convertTemperatureDifference(1, 'degC', 'K')).toBe(1);
		expect(convertTemperatureDifference(1, 'degC', 'degF')).toBe(1.8);
		expect(convertTemperatureDifference(9, 'degF', 'K')).toBe(5);
	});
});

describe('mass, volume, time', () => {
	it('uses the SI prefixes and NIST SP 811 B.8 time units', () => {
		// SI prefixes (BIPM SI Brochure Table 7): kilo 10³, milli 10⁻³, micro 10⁻⁶
		expect(toCanonical(1, 'kg')).toBe(1000);
		expect(toCanonical(250, 'mg')).toBe(0.25);
		expect(toCanonical(2, 'L')).toBe(2000);
		expect(toCanonical(500, 'uL')).toBe(0.5);
		expect(toCanonical(250, 'ug')).toBe(0.00025);
		expect(convertUnit(20, 'mg', 'ug')).toBe(20000);
		// NIST SP 811 B.8: minute (min) → second 6.0 E+01; hour (h) → second 3.6 E+03
		expect(toCanonical(1, 'min')).toBe(60);
		expect(toCanonical(1, 'h')).toBe(3600);
		expect(convertUnit(90, 'min', 'h')).toBe(1.5);
	});
});

describe('unit catalogue', () => {
	it('lists units per quantity with the canonical unit first', () => {
		// design.md, Units: canonical °C, Pa, g, mL, s
		expect(CANONICAL_UNITS).toEqual({ temperature: 'degC', pressure: 'Pa', mass: 'g', volume: 'mL', time: 's' });
		for (const q of QUANTITIES) {
			expect(listUnits(q)[0]).toBe(canonicalUnitOf(q));
			for (const u of listUnits(q)) expect(quantityOf(u)).toBe(q);
		}
		// design.md, Units: shown in °C/°F/K and Pa, mbar, µbar, mTorr, Torr
		expect(listUnits('temperature').map(labelUnit)).toEqual(['°C', '°F', 'K']);
		expect(listUnits('pressure').map(labelUnit)).toEqual(['Pa', 'kPa', 'mbar', 'bar', 'µbar', 'mTorr', 'Torr']);
		expect(labelUnit('uL')).toBe('µL');
	});

	it('recognises unit ids and common header spellings, and nothing else', () => {
		expect(isUnit('mTorr')).toBe(true);
		expect(isUnit('toString')).toBe(false);
		expect(parseUnit('°C')).toBe('degC');
		expect(parseUnit(' µbar ')).toBe('ubar');
		expect(parseUnit('μbar')).toBe('ubar'); // Greek mu, U+03BC
		expect(parseUnit('MTORR')).toBe('mTorr');
		expect(parseUnit('kPa')).toBe('kPa');
		expect(parseUnit('µg')).toBe('ug');
		expect(parseUnit('psi')).toBeNull();
		expect(parseUnit('constructor')).toBeNull();
	});

	it('refuses to convert between quantities', () => {
		expect(() => convertUnit(1, 'Pa', 'degC')).toThrow(TypeError);
	});
});

describe('round trips', () => {
	it('fromCanonical inverts toCanonical for every unit (relative error ≤ 1e-12)', () => {
		fc.assert(
			fc.property(fc.constantFrom(...ALL_UNITS), fc.double({ min: -1e6, max: 1e6, noNaN: true }), (unit, x) => {
				const back = fromCanonical(toCanonical(x, unit), unit);
				// absolute floor of 300 × 1e-12: the 273.15 K offset costs relative precision near 0
				expect(Math.abs(back - x)).toBeLessThanOrEqual(1e-12 * Math.max(Math.abs(x), 300));
			})
		);
	});

	it('convertUnit is consistent through the canonical unit', () => {
		fc.assert(
			fc.property(
				fc.constantFrom(...UNITS_BY_QUANTITY.pressure),
				fc.constantFrom(...UNITS_BY_QUANTITY.pressure),
				fc.double({ min: 1e-6, max: 1e6, noNaN: true }),
				(a, b, x) => {
					expect(Math.abs(convertUnit(convertUnit(x, a, b), b, a) - x)).toBeLessThanOrEqual(1e-12 * x);
				}
			)
		);
	});

	it('keeps NaN (no reading) as NaN', () => {
		expect(toCanonical(NaN, 'mbar')).toBeNaN();
		expect(fromCanonical(NaN, 'K')).toBeNaN();
	});
});

describe('display', () => {
	it('rounds only for display', () => {
		expect(roundForDisplay(-40 + 273.15, { decimals: 2 })).toBe(233.15);
		expect(roundForDisplay(13.332236842105264, { significant: 3 })).toBe(13.3);
		expect(roundForDisplay(0.13332236842105264, { significant: 3 })).toBe(0.133);
	});

	it('formats with the unit default, explicit rounding, locale and missing readings', () => {
		expect(formatQuantity(convertUnit(100, 'mTorr', 'Pa'), 'Pa')).toBe('13.3 Pa');
		expect(formatQuantity(convertUnit(-40, 'degC', 'K'), 'K')).toBe('233.15 K');
		expect(formatQuantity(-0.04, 'degC')).toBe('0.0 °C');
		expect(formatQuantity(100, 'mTorr')).toBe('100 mTorr');
		expect(formatQuantity(750.0616827, 'mTorr', { decimals: 1 })).toBe('750.1 mTorr');
		expect(formatQuantity(13.3322, 'Pa', { locale: 'de' })).toBe('13,3 Pa');
		expect(formatQuantity(NaN, 'Pa')).toBe('—');
		expect(formatQuantity(5, 'degC', { withUnit: false })).toBe('5.0');
	});
});
