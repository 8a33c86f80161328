import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import * as mathjs from 'mathjs';
import {
	ALLOWED_FUNCTIONS,
	checkFormula,
	checkUnit,
	compileFormula,
	convertUnitValue,
	evaluateFormula,
	isSameDimension,
	type UnitValue
} from '$lib/domain/formula';

/** The value of `expr` in `unit`, failing the test if the formula is refused. */
function value(expr: string, unit: string, values: Record<string, UnitValue> = {}): number {
	const r = evaluateFormula(expr, values, unit);
	if (!r.ok) throw new Error(`${expr}: ${r.issues.map((i) => i.message).join('; ')}`);
	return r.value.value;
}

/** Relative difference, for conversions where mathjs's prefix arithmetic carries binary rounding. */
function relErr(a: number, b: number): number {
	return Math.abs(a - b) / Math.abs(b);
}

describe('unit conversions against NIST SP 811 (2008), Appendix B', () => {
	// Exact by definition: NIST SP 811 App. B.8 gives 1 Torr = (101 325/760) Pa; lyophilization.md, "Units".
	it('Torr is exactly 101325/760 Pa, with short prefixes', () => {
		expect(value('1 Torr', 'Pa')).toBe(101325 / 760);
		expect(value('760 Torr', 'Pa')).toBe(101325); // 760 Torr = 1 atm = 101 325 Pa exactly (SP 811 B.8)
		expect(value('1000 mTorr', 'Torr')).toBe(1);
		expect(relErr(value('1 uTorr', 'Pa'), 101325 / 760 / 1e6)).toBeLessThan(1e-15);
		// mathjs's own lower-case torr is rounded to 133.322 Pa; it is redefined exactly too.
		expect(value('1 torr', 'Pa')).toBe(101325 / 760);
	});

	// lyophilization.md, "Units", check values: 100 mTorr = 13.332237 Pa = 0.133322 mbar; 1 mbar = 750.0617 mTorr.
	it('matches the check values of lyophilization.md', () => {
		expect(value('100 mTorr', 'Pa')).toBeCloseTo(13.332237, 6);
		expect(value('100 mTorr', 'mbar')).toBeCloseTo(0.133322, 6);
		expect(value('1 mbar', 'mTorr')).toBeCloseTo(750.0617, 4);
		// −40 °C = −40 °F = 233.15 K (T/K = t/°C + 273.15; t/°F = 1.8 t/°C + 32, SP 811 B.9)
		expect(value('-40 degC', 'degF')).toBeCloseTo(-40, 12);
		expect(value('-40 degC', 'K')).toBeCloseTo(233.15, 12);
	});

	it('pressure units', () => {
		expect(value('1 bar', 'Pa')).toBe(1e5); // SP 811 B.8: bar = 1.0 E+05 Pa (exact)
		expect(value('1 mbar', 'Pa')).toBe(100); // = 1 hPa (exact)
		expect(relErr(value('1 ubar', 'Pa'), 0.1)).toBeLessThan(1e-15); // 0.1 Pa; mathjs gives 0.09999999999999999
		expect(value('1 atm', 'Pa')).toBe(101325); // SP 811 B.8: atmosphere, standard = 1.013 25 E+05 Pa (exact)
		// SP 811 B.8: millimeter of mercury, conventional = 1.333 224 E+02 Pa (13.5951 g/cm³ · 9.80665 m/s² · 1 mm)
		expect(value('1 mmHg', 'Pa')).toBeCloseTo(133.322387415, 9);
		// lyophilization.md: 1 Torr = 0.9999998575 mmHg
		expect(value('1 Torr', 'mmHg')).toBeCloseTo(0.9999998575, 10);
		// SP 811 B.8: pound-force per square inch = 6.894 757 E+03 Pa
		expect(value('1 psi', 'Pa')).toBeCloseTo(6894.757, 3);
	});

	it('length, mass, force, volume, time', () => {
		expect(value('1 inch', 'm')).toBe(0.0254); // SP 811 B.8: inch = 2.54 E-02 m (exact)
		expect(value('1 ft', 'm')).toBe(0.3048); // SP 811 B.8: foot = 3.048 E-01 m (exact)
		expect(value('1 lb', 'kg')).toBe(0.45359237); // SP 811 B.8: pound (avoirdupois) = 4.535 9237 E-01 kg (exact)
		expect(value('1 kgf', 'N')).toBe(9.80665); // SP 811 B.8: kilogram-force = 9.806 65 E+00 N (exact)
		expect(value('1 lbf', 'N')).toBeCloseTo(4.448222, 6); // SP 811 B.8: pound-force = 4.448 222 E+00 N
		expect(value('1 gal', 'L')).toBeCloseTo(3.785412, 6); // SP 811 B.8: gallon (U.S.) = 3.785 412 E-03 m³
		expect(value('1 L', 'm^3')).toBe(0.001); // SI Brochure: 1 L = 1 dm³ = 10⁻³ m³
		expect(value('1 h', 's')).toBe(3600);
		expect(value('90 min', 'h')).toBe(1.5); // min is the unit here, not the function
	});
});

describe('formula arithmetic against mathjs used directly (outside the sandbox)', () => {
	const reference = mathjs.create(mathjs.all);

	it('evaluates the same as mathjs for arithmetic, powers and rounding', () => {
		const cases = [
			'1 + 2 * 3 - 4 / 5',
			'(1.5 + 2.25) ^ 2 / 7',
			'-3 ^ 2',
			'2 ^ -1 + sqrt(2)',
			'round(2.675, 2)',
			'round(-2.5)',
			'round(1.005, 2)',
			'floor(-1.5) + ceil(1.2) + abs(-4)',
			'min(3, 1, 2) + max(4, 9, 2)',
			'round(12 L * 50 mg/mL to g, 1, g) to g'
		];
		for (const expr of cases) {
			const expected = reference.evaluate(expr) as number | mathjs.Unit;
			const n = typeof expected === 'number' ? expected : expected.toNumber('g');
			expect(value(expr, typeof expected === 'number' ? '' : 'g'), expr).toBe(n);
		}
	});

	it('agrees with mathjs on random sums, products and round()', () => {
		fc.assert(
			fc.property(
				fc.double({ min: -1e6, max: 1e6, noNaN: true }),
				fc.double({ min: -1e6, max: 1e6, noNaN: true }),
				fc.integer({ min: 0, max: 6 }),
				(a, b, d) => {
					const values = { a: { value: a, unit: '' }, b: { value: b, unit: '' } };
					const expected = reference.evaluate(`round(a * 3 + b / 7, ${d})`, { a, b }) as number;
					expect(value(`round(a * 3 + b / 7, ${d})`, '', values)).toBe(expected);
				}
			)
		);
	});

	it('scales a component by the batch size with units', () => {
		// 12 L × 50 mg/mL = 600 g (arithmetic)
		expect(value('batch_size * 50 mg/mL', 'g', { batch_size: { value: 12, unit: 'L' } })).toBeCloseTo(600, 10);
		expect(value('batch_size / fill_volume', 'vial', { batch_size: { value: 12, unit: 'L' }, fill_volume: { value: 1.1, unit: 'mL/vial' } })).toBeCloseTo(
			12000 / 1.1,
			8
		);
	});

	it('turns a dimensionless ratio into percent', () => {
		expect(value('a / b', '%', { a: { value: 3, unit: 'vial' }, b: { value: 200, unit: 'vials' } })).toBeCloseTo(1.5, 12);
		const r = convertUnitValue({ value: 95, unit: '%' }, '');
		expect(r.ok && r.value.value).toBeCloseTo(0.95, 15);
	});
});

describe('formula check when it is written', () => {
	const names = new Map([
		['batch_size', 'L'],
		['mass_a', 'g'],
		['volume_b', 'mL'],
		['count_c', 'vial']
	]);

	it('accepts a formula whose units fit the result', () => {
		expect(checkFormula('batch_size * 50 mg/mL', names, 'kg')).toEqual({ ok: true, issues: [], references: ['batch_size'] });
	});

	it('names unknown names', () => {
		const r = checkFormula('mass_a + nothing_here * 2 + pi', names, 'g');
		expect(r.ok).toBe(false);
		expect(r.issues.map((i) => [i.code, i.at])).toEqual([
			['unknown-name', 'nothing_here'],
			['unknown-name', 'pi']
		]);
	});

	it('refuses units that do not match, naming them', () => {
		const r = checkFormula('mass_a + volume_b', names, 'g');
		expect(r.issues).toEqual([{ code: 'unit-mismatch', message: 'units do not match: g and mL', at: 'mass_a + volume_b' }]);
		expect(checkFormula('mass_a + 1', names, 'g').issues[0].code).toBe('unit-mismatch');
		expect(checkFormula('count_c + mass_a', names, 'g').issues[0].code).toBe('unit-mismatch');
	});

	it('refuses a result in the wrong unit', () => {
		const r = checkFormula('mass_a / volume_b', names, 'g');
		expect(r.issues[0]).toMatchObject({ code: 'result-unit', message: 'the result is in g / mL; expected g' });
	});

	it('says how to round a quantity with a unit', () => {
		expect(checkFormula('round(mass_a, 1)', names, 'g').issues[0].message).toBe('round of a quantity with a unit needs the unit, e.g. round(x, 1, g)');
		expect(checkFormula('round(mass_a, 1, g)', names, 'g').ok).toBe(true);
	});

	it('refuses text that does not parse', () => {
		const r = checkFormula('2 * (mass_a', names, 'g');
		expect(r.issues[0].code).toBe('parse');
	});

	it('refuses empty and overlong formulas', () => {
		expect(compileFormula('  ').ok).toBe(false);
		const long = compileFormula('1+'.repeat(300) + '1');
		expect(!long.ok && long.issues[0].code).toBe('too-long');
	});

	it('lists references without units or the minute', () => {
		const c = compileFormula('mass_a / (5 min) + volume_b * 2 mg/mL');
		expect(c.ok && c.value.references).toEqual(['mass_a', 'volume_b']);
	});
});

describe('sandbox: known mathjs expression-injection attempts are refused', () => {
	// Expression-injection patterns against mathjs's own evaluate (mathjs docs, "Security"), plus
	// the structures a formula has no use for.
	const attempts: [string, RegExp][] = [
		['import({ x: 1 }, { override: true })', /function import is not allowed/],
		['createUnit("foo")', /function createUnit is not allowed/],
		['evaluate("1 + 1")', /function evaluate is not allowed/],
		['parse("1 + 1")', /function parse is not allowed/],
		['compile("1")', /function compile is not allowed/],
		['simplify("x + x")', /function simplify is not allowed/],
		['derivative("x^2", "x")', /function derivative is not allowed/],
		['chain(3).done()', /only named functions|not allowed/],
		['typed("x", {})', /function typed is not allowed/],
		['config({ number: "BigNumber" })', /function config is not allowed/],
		['f(x) = x^2', /defining functions is not allowed/],
		['a = 1', /assignments are not allowed/],
		['a.b = 1', /assignments are not allowed/],
		['[1, 2].map(f)', /property or index access is not allowed/],
		['[1, 2, 3]', /lists and matrices are not allowed/],
		['"".constructor', /property or index access is not allowed/],
		['cos.constructor("return process")()', /cannot be read|not allowed/],
		['sqrt.constructor("return process")', /property or index access is not allowed/],
		['unit.prototype', /property or index access is not allowed/],
		['x["constructor"]', /property or index access is not allowed/],
		['{ a: 1 }', /objects are not allowed/],
		['1:3', /ranges are not allowed/],
		['a ? b : c', /conditions/],
		['a < b', /operator '<' is not allowed/],
		['a == b', /operator '==' is not allowed/],
		['a and b', /operator 'and' is not allowed/],
		['5!', /operator '!' is not allowed/],
		['7 mod 2', /operator 'mod' is not allowed/],
		['10 %', /'%' is not allowed/],
		['1; 2', /one expression/],
		['"some text"', /text is not allowed/],
		['true', /true is not allowed/],
		['round', /must be called/],
		['1e400', /too large/]
	];
	it.each(attempts)('refuses %s', (text, message) => {
		const r = compileFormula(text);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.issues.map((i) => i.message).join(' | ')).toMatch(message);
		const e = evaluateFormula(text, {}, '');
		expect(e.ok).toBe(false);
	});

	it('allows exactly the documented functions', () => {
		expect([...ALLOWED_FUNCTIONS]).toEqual(['round', 'floor', 'ceil', 'min', 'max', 'abs', 'sqrt']);
		for (const fn of ['exp', 'log', 'sin', 'random', 'unit', 'number', 'format', 'print', 'help']) {
			expect(compileFormula(`${fn}(1)`).ok, fn).toBe(false);
		}
	});

	it('never resolves names through a prototype', () => {
		for (const name of ['constructor', '__proto__', 'toString', 'hasOwnProperty', 'valueOf']) {
			const r = evaluateFormula(`${name} * 2`, {}, '');
			expect(r.ok, name).toBe(false);
		}
	});

	it('refuses a hand-made parse tree that names a prototype member', () => {
		const c = compileFormula('1 + 2');
		if (!c.ok) throw new Error('compile failed');
		const node = c.value.node as unknown as { fn: string };
		node.fn = 'constructor'; // as if a caller built the tree itself
		const r = evaluateFormula(c.value, {}, '');
		expect(!r.ok && r.issues[0].message).toBe('constructor is not allowed');
	});

	it('refuses results that are not finite numbers', () => {
		expect(evaluateFormula('1 / 0', {}, '').ok).toBe(false);
		expect(evaluateFormula('sqrt(-1)', {}, '').ok).toBe(false); // predictable: NaN, never complex
	});
});

describe('unit texts', () => {
	it('reads the units of templates, with common spellings', () => {
		expect(checkUnit('°C')).toEqual({ ok: true, unit: 'degC' });
		expect(checkUnit('µg/mL')).toEqual({ ok: true, unit: 'ug/mL' });
		expect(checkUnit('%')).toEqual({ ok: true, unit: 'percent' });
		expect(checkUnit('vials')).toEqual({ ok: true, unit: 'vials' });
		expect(checkUnit('')).toEqual({ ok: true, unit: '' });
		expect(checkUnit('5 g').ok).toBe(false);
		expect(checkUnit('furlongs per fortnight').ok).toBe(false);
	});

	it('refuses unknown units in values and conversions instead of throwing', () => {
		const r = evaluateFormula('a * 2', { a: { value: 1, unit: 'furlongs' } }, '');
		expect(!r.ok && r.issues[0].code).toBe('unknown-unit');
		const c = convertUnitValue({ value: 1, unit: 'g' }, 'smidgens');
		expect(!c.ok && c.issues[0].message).toBe("'smidgens' is not a known unit");
	});

	it('compares dimensions', () => {
		expect(isSameDimension('kg', 'mg')).toBe(true);
		expect(isSameDimension('mTorr', 'mbar')).toBe(true);
		expect(isSameDimension('g', 'mL')).toBe(false);
		expect(isSameDimension('vial', 'stopper')).toBe(false); // count units never mix
		expect(isSameDimension('', '%')).toBe(true);
		expect(isSameDimension('nonsense', 'g')).toBe(false);
	});
});
