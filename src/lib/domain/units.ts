/**
 * Exact unit conversions for the quantities Rimebook stores and shows.
 *
 * Canonical (stored) units, design.md "Units": temperature °C, pressure Pa, mass g, volume mL,
 * time s. Every other unit is defined by an exact rational factor (and, for temperature, an
 * exact offset) so that no conversion carries a rounded constant; rounding happens only for
 * display (`roundForDisplay`, `formatQuantity`).
 *
 * Sources (NIST SP 811 (2008), App. B.8/B.9; BIPM SI Brochure, 9th ed.):
 * - mbar = 100 Pa, µbar = 0.1 Pa (bar = 10⁵ Pa exactly).
 * - Torr = 101 325/760 Pa exactly (1/760 of the standard atmosphere, 101 325 Pa exactly);
 *   mTorr = Torr/1000. mathjs 15 rounds torr to 133.322 Pa, which is why it is not used here.
 * - T/K = t/°C + 273.15; t/°F = 1.8 · t/°C + 32.
 * - L = 1000 mL, µL = 0.001 mL; kg = 1000 g, mg = 0.001 g; min = 60 s, h = 3600 s.
 */

export const QUANTITIES = ['temperature', 'pressure', 'mass', 'volume', 'time'] as const;
export type Quantity = (typeof QUANTITIES)[number];

export const TEMPERATURE_UNITS = ['degC', 'degF', 'K'] as const;
export const PRESSURE_UNITS = ['Pa', 'kPa', 'mbar', 'bar', 'ubar', 'mTorr', 'Torr'] as const;
export const MASS_UNITS = ['g', 'mg', 'ug', 'kg'] as const;
export const VOLUME_UNITS = ['mL', 'L', 'uL'] as const;
export const TIME_UNITS = ['s', 'min', 'h'] as const;

export type TemperatureUnit = (typeof TEMPERATURE_UNITS)[number];
export type PressureUnit = (typeof PRESSURE_UNITS)[number];
export type MassUnit = (typeof MASS_UNITS)[number];
export type VolumeUnit = (typeof VOLUME_UNITS)[number];
export type TimeUnit = (typeof TIME_UNITS)[number];
export type Unit = TemperatureUnit | PressureUnit | MassUnit | VolumeUnit | TimeUnit;

/** Units of each quantity, canonical unit first. */
export const UNITS_BY_QUANTITY = {
	temperature: TEMPERATURE_UNITS,
	pressure: PRESSURE_UNITS,
	mass: MASS_UNITS,
	volume: VOLUME_UNITS,
	time: TIME_UNITS
} as const satisfies Record<Quantity, readonly Unit[]>;

export const CANONICAL_UNITS = {
	temperature: 'degC',
	pressure: 'Pa',
	mass: 'g',
	volume: 'mL',
	time: 's'
} as const satisfies Record<Quantity, Unit>;
export type CanonicalUnit = (typeof CANONICAL_UNITS)[Quantity];

/**
 * canonical = (value − offset) · num / den; value = canonical · den / num + offset.
 * Multiplying by the integer numerator before dividing by the integer denominator keeps
 * results such as 760 Torr → 101 325 Pa exact in binary floating point.
 */
interface UnitDefinition {
	quantity: Quantity;
	label: string;
	num: number;
	den: number;
	offset: number;
}

const DEFINITIONS: Record<Unit, UnitDefinition> = {
	degC: { quantity: 'temperature', label: '°C', num: 1, den: 1, offset: 0 },
	// t/°C = (t/°F − 32) · 5/9, NIST SP 811 B.9
	degF: { quantity: 'temperature', label: '°F', num: 5, den: 9, offset: 32 },
	// t/°C = T/K − 273.15, NIST SP 811 §4.2.1.1
	K: { quantity: 'temperature', label: 'K', num: 1, den: 1, offset: 273.15 },
	Pa: { quantity: 'pressure', label: 'Pa', num: 1, den: 1, offset: 0 },
	// kPa = 10³ Pa, bar = 10⁵ Pa exactly (NIST SP 811 table 8: the bar is accepted for use with the SI)
	kPa: { quantity: 'pressure', label: 'kPa', num: 1000, den: 1, offset: 0 },
	mbar: { quantity: 'pressure', label: 'mbar', num: 100, den: 1, offset: 0 },
	bar: { quantity: 'pressure', label: 'bar', num: 100000, den: 1, offset: 0 },
	ubar: { quantity: 'pressure', label: 'µbar', num: 1, den: 10, offset: 0 },
	// Torr = 101 325/760 Pa exactly
	Torr: { quantity: 'pressure', label: 'Torr', num: 101325, den: 760, offset: 0 },
	mTorr: { quantity: 'pressure', label: 'mTorr', num: 101325, den: 760000, offset: 0 },
	g: { quantity: 'mass', label: 'g', num: 1, den: 1, offset: 0 },
	mg: { quantity: 'mass', label: 'mg', num: 1, den: 1000, offset: 0 },
	ug: { quantity: 'mass', label: 'µg', num: 1, den: 1000000, offset: 0 },
	kg: { quantity: 'mass', label: 'kg', num: 1000, den: 1, offset: 0 },
	mL: { quantity: 'volume', label: 'mL', num: 1, den: 1, offset: 0 },
	L: { quantity: 'volume', label: 'L', num: 1000, den: 1, offset: 0 },
	uL: { quantity: 'volume', label: 'µL', num: 1, den: 1000, offset: 0 },
	s: { quantity: 'time', label: 's', num: 1, den: 1, offset: 0 },
	min: { quantity: 'time', label: 'min', num: 60, den: 1, offset: 0 },
	h: { quantity: 'time', label: 'h', num: 3600, den: 1, offset: 0 }
};

export function isUnit(value: unknown): value is Unit {
	return typeof value === 'string' && Object.hasOwn(DEFINITIONS, value);
}

export function quantityOf(unit: Unit): Quantity {
	return DEFINITIONS[unit].quantity;
}

export function listUnits(quantity: Quantity): readonly Unit[] {
	return UNITS_BY_QUANTITY[quantity];
}

export function canonicalUnitOf(quantity: Quantity): CanonicalUnit {
	return CANONICAL_UNITS[quantity];
}

/** Display label (°C, °F, K, Pa, kPa, mbar, bar, µbar, mTorr, Torr, g, mg, µg, kg, mL, L, µL, s, min, h). */
export function labelUnit(unit: Unit): string {
	return DEFINITIONS[unit].label;
}

/** Value in `unit` → value in the canonical unit of its quantity. NaN stays NaN. */
export function toCanonical(value: number, unit: Unit): number {
	const d = DEFINITIONS[unit];
	if (d.num === 1 && d.den === 1) return value - d.offset;
	return ((value - d.offset) * d.num) / d.den;
}

/** Value in the canonical unit → value in `unit`. NaN stays NaN. */
export function fromCanonical(value: number, unit: Unit): number {
	const d = DEFINITIONS[unit];
	if (d.num === 1 && d.den === 1) return value + d.offset;
	return (value * d.den) / d.num + d.offset;
}

/** Converts between two units of the same quantity; throws on a quantity mismatch. */
export function convertUnit(value: number, from: Unit, to: Unit): number {
	if (from === to) return value;
	const qf = DEFINITIONS[from].quantity;
	const qt = DEFINITIONS[to].quantity;
	if (qf !== qt) throw new TypeError(`cannot convert ${qf} (${from}) to ${qt} (${to})`);
	return fromCanonical(toCanonical(value, from), to);
}

/**
 * Converts a temperature *difference* (e.g. a tolerance or a ramp rate numerator): offsets
 * do not apply, 1 K = 1 °C = 1.8 °F.
 */
export function convertTemperatureDifference(
	delta: number,
	from: TemperatureUnit,
	to: TemperatureUnit
): number {
	const f = DEFINITIONS[from];
	const t = DEFINITIONS[to];
	return (((delta * f.num) / f.den) * t.den) / t.num;
}

const ALIASES: Record<string, Unit> = {
	'°c': 'degC',
	'ºc': 'degC',
	c: 'degC',
	degc: 'degC',
	'°f': 'degF',
	'ºf': 'degF',
	f: 'degF',
	degf: 'degF',
	k: 'K',
	pa: 'Pa',
	kpa: 'kPa',
	mbar: 'mbar',
	bar: 'bar',
	ubar: 'ubar',
	'µbar': 'ubar',
	'μbar': 'ubar',
	microbar: 'ubar',
	mtorr: 'mTorr',
	torr: 'Torr',
	g: 'g',
	mg: 'mg',
	ug: 'ug',
	'µg': 'ug',
	'μg': 'ug',
	kg: 'kg',
	ml: 'mL',
	l: 'L',
	ul: 'uL',
	'µl': 'uL',
	'μl': 'uL',
	s: 's',
	min: 'min',
	h: 'h'
};

/**
 * Parses a unit id or label as typed in a log header or a mapping form ("°C", "mbar", "µbar",
 * "mtorr" ...). Case-insensitive because every unit accepted here stays unambiguous without
 * case (no Mbar, no ML). Returns null for anything else; never guesses.
 */
export function parseUnit(text: string): Unit | null {
	const key = text.trim().toLowerCase();
	return Object.hasOwn(ALIASES, key) ? ALIASES[key] : null;
}

export interface DisplayRounding {
	/** fixed number of decimals, e.g. 1 for °C */
	decimals?: number;
	/** significant digits, e.g. 3 for pressure, which spans decades */
	significant?: number;
}

/** Default display rounding per unit: temperatures to 0.1 °C/°F (0.01 K), others 3–4 digits. */
export const DEFAULT_DISPLAY_ROUNDING: Record<Unit, DisplayRounding> = {
	degC: { decimals: 1 },
	degF: { decimals: 1 },
	K: { decimals: 2 },
	Pa: { significant: 3 },
	kPa: { significant: 3 },
	mbar: { significant: 3 },
	bar: { significant: 3 },
	ubar: { significant: 3 },
	mTorr: { significant: 3 },
	Torr: { significant: 3 },
	g: { significant: 4 },
	mg: { significant: 4 },
	ug: { significant: 4 },
	kg: { significant: 4 },
	mL: { significant: 4 },
	L: { significant: 4 },
	uL: { significant: 4 },
	s: { decimals: 0 },
	min: { decimals: 1 },
	h: { decimals: 2 }
};

/**
 * Rounds for display only (never store the result), with toPrecision/toFixed: −40 °C in K,
 * stored as 233.14999999999998, shows as 233.15. Ties are decided on the binary value, as by
 * every IEEE-754 printer (1.005 is stored just below 1.005 and shows as 1.00 at 2 decimals).
 */
export function roundForDisplay(value: number, rounding: DisplayRounding): number {
	if (!Number.isFinite(value)) return value;
	if (rounding.significant !== undefined) {
		if (value === 0) return 0;
		return Number(value.toPrecision(rounding.significant));
	}
	const decimals = rounding.decimals ?? 0;
	return Number(value.toFixed(decimals));
}

export interface FormatOptions extends DisplayRounding {
	/** BCP 47 locale for digit grouping and the decimal sign; default 'en' */
	locale?: string;
	/** text for NaN/±Infinity (a missing reading); default '—' */
	missing?: string;
	/** append the unit label (default true) */
	withUnit?: boolean;
}

/**
 * Formats a value that is already in `unit` for display, e.g. formatQuantity(13.3322, 'Pa')
 * → "13.3 Pa". Rounding: options.decimals / options.significant, else the unit's default.
 */
export function formatQuantity(value: number, unit: Unit, options: FormatOptions = {}): string {
	const missing = options.missing ?? '—';
	if (!Number.isFinite(value)) return missing;
	const rounding: DisplayRounding =
		options.decimals !== undefined || options.significant !== undefined
			? { decimals: options.decimals, significant: options.significant }
			: DEFAULT_DISPLAY_ROUNDING[unit];
	const nf =
		rounding.significant !== undefined
			? new Intl.NumberFormat(options.locale ?? 'en', {
					maximumSignificantDigits: rounding.significant,
					minimumSignificantDigits: rounding.significant
				})
			: new Intl.NumberFormat(options.locale ?? 'en', {
					minimumFractionDigits: rounding.decimals ?? 0,
					maximumFractionDigits: rounding.decimals ?? 0
				});
	// Avoid "-0.0" for values that round to zero.
	const rounded = roundForDisplay(value, rounding);
	const text = nf.format(rounded === 0 ? 0 : rounded);
	return options.withUnit === false ? text : `${text} ${labelUnit(unit)}`;
}
