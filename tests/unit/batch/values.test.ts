import { describe, expect, it } from 'vitest';
import { acceptedUnits, decimalsIn, isEnteredField, readInstant, readNumber, readPlainValue } from '$lib/domain/batch/values';
import type { Field } from '$lib/schemas/template';
import { fieldSchema } from '$lib/schemas/template';
import { demoTemplate } from '$lib/domain/fixtures/demo-template';

const field = (f: unknown): Field => fieldSchema.parse(f);
const now = new Date('2026-12-01T12:00:00Z');

describe('reading a number as typed (values.ts)', () => {
	// NIST SP 811 (2008) §B.9 and Appendix B.8: t/°F = 1.8·t/°C + 32 (exact), T/K = t/°C + 273.15 (exact).
	it('takes a value typed in °F or K for a °C field, converted exactly and judged in °C', () => {
		const f = { key: 'shelf', unit: 'degC', decimals: 1 };
		const inF = readNumber(f, { value: '77.0', unit: 'degF' });
		expect(inF).toEqual({ ok: true, value: { kind: 'number', text: '77.0', unit: 'degF', value: 25, canonical: { value: 25, unit: 'degC' } } });
		const inK = readNumber(f, { value: '233.2', unit: 'K' });
		expect(inK.ok && inK.value.value).toBe(-39.95);
		// −40 °C = −40 °F: the crossing point of the two scales (NIST SP 811 conversion, exact).
		const minus40 = readNumber(f, { value: '-40.0', unit: 'degF' });
		expect(minus40.ok && minus40.value.value).toBe(-40);
	});

	// SI Brochure (9th ed., 2019) Table 8: 1 bar = 100 kPa, so 1 mbar = 100 Pa; NIST SP 811 B.8: 1 Torr = 101325/760 Pa.
	it('stores pressures canonical in Pa', () => {
		const mbar = readNumber({ key: 'p', unit: 'Pa', decimals: 1 }, { value: '0.12', unit: 'mbar' });
		expect(mbar.ok && mbar.value.value).toBe(12);
		const torr = readNumber({ key: 'p', unit: 'Pa', decimals: 2 }, { value: '0.0600', unit: 'Torr' });
		expect(torr.ok && torr.value.canonical?.value).toBeCloseTo((0.06 * 101325) / 760, 9);
	});

	it('refuses a unit of another quantity, text that is not a number, and more decimals than the field resolves', () => {
		const f = { key: 'w', unit: 'g', decimals: 1 };
		expect(readNumber(f, { value: '600.4', unit: 'degC' })).toMatchObject({ ok: false, problem: { code: 'wrong-unit' } });
		expect(readNumber(f, 'six hundred')).toMatchObject({ ok: false, problem: { code: 'not-a-number' } });
		expect(readNumber(f, '600.45')).toMatchObject({ ok: false, problem: { code: 'too-many-decimals' } });
		expect(readNumber(f, true)).toMatchObject({ ok: false, problem: { code: 'wrong-type' } });
	});

	// The resolution carried over: 0.1 °C is 0.18 °F (NIST SP 811 factor 1.8), so one decimal in °F; 0.1 g is 0.0001 kg.
	it('allows as many decimals in another unit as the field resolution needs there', () => {
		expect(decimalsIn('degC', 1, 'degF')).toBe(1);
		expect(decimalsIn('degC', 1, 'K')).toBe(1);
		expect(decimalsIn('g', 1, 'kg')).toBe(4);
		expect(decimalsIn('Pa', 0, 'mbar')).toBe(2);
		expect(acceptedUnits('degC')).toEqual(['degC', 'degF', 'K']);
		expect(acceptedUnits('vial')).toEqual(['vial']);
	});
});

describe('reading the other field kinds (values.ts)', () => {
	it('checks the count of repeated readings, the options of a choice and the type of a check', () => {
		const rep = field({ kind: 'repeated', key: 'fill', label: 'Fill weights', unit: 'g', decimals: 3, count: 3 });
		expect(readPlainValue(rep, ['1.001', '1.002'], { now })).toMatchObject({ ok: false, problem: { code: 'wrong-count' } });
		expect(readPlainValue(rep, ['1.001', '1.002', '0.999'], { now })).toEqual({ ok: true, value: { kind: 'repeated', texts: ['1.001', '1.002', '0.999'], unit: 'g', values: [1.001, 1.002, 0.999] } });
		const choice = field({ kind: 'choice', key: 'look', label: 'Cake', options: [{ value: 'ok', label: 'Elegant' }, { value: 'collapsed', label: 'Collapsed' }] });
		expect(readPlainValue(choice, 'melted', { now })).toMatchObject({ ok: false, problem: { code: 'not-an-option' } });
		expect(readPlainValue(choice, 'ok', { now })).toEqual({ ok: true, value: { kind: 'choice', value: ['ok'] } });
		const check = field({ kind: 'check', key: 'c', label: 'Done', expected: true });
		expect(readPlainValue(check, 'yes', { now })).toMatchObject({ ok: false, problem: { code: 'wrong-type' } });
		expect(readPlainValue(check, '', { now })).toEqual({ ok: true, value: undefined });
	});

	// ALCOA+ "Contemporaneous" (PIC/S PI 041-1, from memory): a record of work is not dated after it is made; a minute of clock skew allowed.
	it('refuses a time in the future and a time without a zone (ISO 8601 needs a designator for an instant)', () => {
		const dt = field({ kind: 'datetime', key: 'at', label: 'Stoppering' });
		expect(readPlainValue(dt, '2026-12-01T12:00:59Z', { now })).toEqual({ ok: true, value: { kind: 'datetime', value: '2026-12-01T12:00:59.000Z' } });
		expect(readPlainValue(dt, '2026-12-01T12:01:01Z', { now })).toMatchObject({ ok: false, problem: { code: 'in-the-future' } });
		expect(readPlainValue(dt, '2026-12-01T11:00', { now })).toMatchObject({ ok: false, problem: { code: 'not-a-date' } });
		// ISO 8601-1:2019 (from memory): a UTC offset in ±hh:mm names the same instant as its Z form.
		expect(readInstant('2026-12-01T13:00:00+01:00')?.toISOString()).toBe('2026-12-01T12:00:00.000Z');
	});

	it('a calculated field takes no value; a recipe field takes its cycle run (issue 7)', () => {
		expect(isEnteredField(field({ kind: 'calculated', key: 'q', label: 'Q', formula: 'batch_size * 1 mg/mL', unit: 'g', decimals: 1 }))).toBe(false);
		const recipe = demoTemplate.sections.flatMap((s) => s.steps.flatMap((st) => st.fields)).find((f) => f.kind === 'recipe')!;
		expect(isEnteredField(recipe)).toBe(true);
		// The run is looked up on the server only: the pure reader leaves it to validate.ts.
		expect(readPlainValue(recipe, 'some-run-id', { now })).toEqual({ ok: true, value: undefined });
	});
});
