/**
 * Values against limits, and the decimals rule for entering, showing and judging a value.
 *
 * The rule (one rule everywhere: client, server, PDF):
 * - An ENTERED value is judged exactly as entered. It may have at most the field's decimals;
 *   more are refused at entry, never rounded away, so the record keeps the original (ALCOA+
 *   "Original", "Accurate"; EU GMP Ch. 4.8).
 * - A CALCULATED value (a formula, a mean, an SD, an acceptance value, a yield) is rounded half
 *   away from zero to the field's decimals, and that rounded value is shown and judged; the
 *   intermediate values are never rounded. This follows USP General Notices 7.20, "Rounding
 *   rules" (from memory: round the final reportable value to the places of the limit, look at
 *   one more digit only, 5 and above rounds up), so a value shown as in limits is in limits.
 * - Rounding works on the decimal text of the number to 15 significant digits, not on its
 *   binary expansion, so 1.005 rounds to 1.01 and 0.285 × 100 to 29, as a person would expect
 *   (and as mathjs's round does).
 * - Bounds are inclusive: a value equal to a limit is within limits.
 */

export type LimitStatus = 'within' | 'below' | 'above';

/** The limits of a field as written in a template (structurally the schema's `Limits`). */
export type LimitSpec =
	| { kind: 'range'; min?: number; max?: number; target?: number }
	| { kind: 'tolerance'; target?: number; targetFrom?: string; tolerance: number; relative?: boolean };

/** Limits resolved to numbers in the field's unit. */
export interface Bounds {
	min?: number;
	max?: number;
	target?: number;
}

/** Digits and decimal exponent of the shortest decimal text of |x|: x = 0.d1d2… × 10^(exp+1). */
function decimalParts(x: number): { digits: string; exp: number } {
	const [mantissa, e] = Math.abs(x).toExponential().split('e');
	return { digits: mantissa.replace('.', ''), exp: Number(e) };
}

/** How many decimals the shortest decimal text of x has (0.25 → 2, 1e-7 → 7, 1200 → 0). */
export function decimalsOf(x: number): number {
	if (!Number.isFinite(x) || x === 0) return 0;
	const { digits, exp } = decimalParts(x);
	return Math.max(0, digits.length - 1 - exp);
}

type Rounding = 'half-away' | 'ceil' | 'floor';

/** Rounds on the shortest decimal text of x, so no binary noise decides the last digit. */
function roundDecimal(x: number, decimals: number, mode: Rounding): number {
	if (!Number.isInteger(decimals) || decimals < 0 || decimals > 15) throw new RangeError('decimals must be 0–15');
	if (!Number.isFinite(x)) return x;
	// 15 significant digits: what a double carries reliably. Drops the noise of arithmetic
	// (0.285 × 100 = 28.499999999999996) so it never decides the last digit.
	x = Number(x.toPrecision(15));
	if (decimalsOf(x) <= decimals) return x;
	const { digits, exp } = decimalParts(x);
	const keep = exp + 1 + decimals; // digits before the place that decides
	let kept = keep <= 0 ? 0n : BigInt(digits.slice(0, keep));
	// The dropped digits are not all zero here (x has more decimals than `decimals`).
	const away =
		mode === 'half-away' ? keep >= 0 && digits.charCodeAt(keep) >= 53 /* '5' */ : mode === 'ceil' ? x > 0 : x < 0;
	if (away) kept += 1n;
	const r = Number(`${kept}e-${decimals}`);
	return r === 0 ? 0 : x < 0 ? -r : r;
}

/** Rounds half away from zero to `decimals` places, on the decimal text (see the rule above). */
export function roundHalfAwayFromZero(x: number, decimals: number): number {
	return roundDecimal(x, decimals, 'half-away');
}

/** The smallest number with `decimals` places that is ≥ x (exact on the decimal text). */
export function ceilToDecimals(x: number, decimals: number): number {
	return roundDecimal(x, decimals, 'ceil');
}

/** The largest number with `decimals` places that is ≤ x (exact on the decimal text). */
export function floorToDecimals(x: number, decimals: number): number {
	return roundDecimal(x, decimals, 'floor');
}

/** Text of a value with exactly `decimals` places, rounded by the rule above. */
export function formatFixed(x: number, decimals: number): string {
	return roundHalfAwayFromZero(x, decimals).toFixed(decimals);
}

export type EntryResult =
	| { ok: true; value: number; decimals: number }
	| { ok: false; code: 'not-a-number' | 'too-many-decimals'; message: string };

const ENTRY = /^[+-]?\d+(?:[.,](\d+))?$/;

/**
 * Reads a number as an operator types it: digits with one optional decimal point or comma; no
 * thousands separators, no exponent. At most `decimals` places (trailing zeros count: they are
 * what was read off the instrument).
 */
export function parseEntry(text: string, decimals: number): EntryResult {
	const m = ENTRY.exec(text.trim());
	if (!m) return { ok: false, code: 'not-a-number', message: `'${text}' is not a number` };
	const places = m[1]?.length ?? 0;
	if (places > decimals) {
		return { ok: false, code: 'too-many-decimals', message: `enter at most ${decimals} decimal${decimals === 1 ? '' : 's'}` };
	}
	return { ok: true, value: Number(text.trim().replace(',', '.')), decimals: places };
}

/** Exact decimal sum/difference of two limit numbers, so 0.3 − 0.1 gives 0.2, not 0.19999999999999998. */
function addDecimal(a: number, b: number): number {
	return roundHalfAwayFromZero(a + b, Math.min(15, Math.max(decimalsOf(a), decimalsOf(b))));
}

/**
 * Resolves limits to bounds. `resolvedTarget` is the target of a `targetFrom` limit (the value of
 * the calculated field it names, in this field's unit), needed only then.
 */
export function resolveBounds(limits: LimitSpec, resolvedTarget?: number): Bounds {
	if (limits.kind === 'range') return { min: limits.min, max: limits.max, target: limits.target };
	const target = limits.target ?? resolvedTarget;
	if (target === undefined) throw new RangeError(`no target for limits from ${limits.targetFrom ?? '?'}`);
	let delta = limits.tolerance;
	if (limits.relative) {
		const places = Math.min(15, decimalsOf(target) + decimalsOf(limits.tolerance) + 2);
		delta = roundHalfAwayFromZero(Math.abs(target) * limits.tolerance / 100, places);
	}
	return { min: addDecimal(target, -delta), max: addDecimal(target, delta), target };
}

/**
 * Bounds tightened to `decimals` places: min rounded up, max rounded down. For a value with at
 * most `decimals` places (every entered value, every reported calculation) the judgement is
 * exactly the same, and 9.36 g ± 1 % reads 9.27–9.45 g instead of 9.2664–9.4536 g.
 */
export function tightenBounds(bounds: Bounds, decimals: number): Bounds {
	return {
		min: bounds.min === undefined ? undefined : ceilToDecimals(bounds.min, decimals),
		max: bounds.max === undefined ? undefined : floorToDecimals(bounds.max, decimals),
		target: bounds.target
	};
}

/** Judges a value as given (entered values). Bounds are inclusive. */
export function checkValue(value: number, bounds: Bounds): LimitStatus {
	if (bounds.min !== undefined && value < bounds.min) return 'below';
	if (bounds.max !== undefined && value > bounds.max) return 'above';
	return 'within';
}

/** Judges a calculated value: rounded to `decimals` first, and the rounded value is judged. */
export function checkReported(value: number, bounds: Bounds, decimals: number): { reported: number; status: LimitStatus } {
	const reported = roundHalfAwayFromZero(value, decimals);
	return { reported, status: checkValue(reported, bounds) };
}

/** A choice is within limits if every chosen value is acceptable (no list: all are). */
export function checkChoice(chosen: readonly string[], acceptable?: readonly string[]): 'within' | 'unacceptable' {
	if (!acceptable || acceptable.length === 0) return 'within';
	return chosen.every((c) => acceptable.includes(c)) ? 'within' : 'unacceptable';
}

/** A yes/no check is within limits if it gives the expected answer (none expected: any). */
export function checkYesNo(answer: boolean, expected?: boolean): 'within' | 'unacceptable' {
	return expected === undefined || answer === expected ? 'within' : 'unacceptable';
}

// ---- entry checks of material lots and equipment (what "status and expiry / calibration
// checked at entry" means for those field kinds)

const ISO_DATE = /^\d{4}-\d{2}-\d{2}$/;

function requireDate(name: string, value: string): void {
	if (!ISO_DATE.test(value)) throw new RangeError(`${name} must be a date YYYY-MM-DD`);
}

export interface LotFacts {
	itemCode: string;
	/** quarantine | released | rejected (the material_lot table) */
	status: string;
	/** Last day of use, YYYY-MM-DD. */
	expiresOn: string;
}
export type LotProblem = 'wrong-item' | 'not-released' | 'expired';

/**
 * Whether a lot may be used for a material field: the right item, released by QA (21 CFR
 * 211.84(a): components stay in quarantine until released) and not expired on `today` (the
 * site's date, YYYY-MM-DD). A lot may be used on its expiry date (common practice).
 */
export function checkLot(field: { itemCode: string }, lot: LotFacts, today: string): LotProblem[] {
	requireDate('today', today);
	requireDate('expiresOn', lot.expiresOn);
	const problems: LotProblem[] = [];
	if (lot.itemCode !== field.itemCode) problems.push('wrong-item');
	if (lot.status !== 'released') problems.push('not-released');
	if (lot.expiresOn < today) problems.push('expired');
	return problems;
}

export interface EquipmentFacts {
	equipmentClass: string;
	/** in-service | out-of-service | cleaning-due (the equipment table) */
	status: string;
	/** YYYY-MM-DD, or null for equipment without calibration. */
	calibrationDueOn: string | null;
}
export type EquipmentProblem = 'wrong-class' | 'not-in-service' | 'calibration-overdue';

/**
 * Whether an equipment item may be used for an equipment field: the right class, in service and
 * calibrated (21 CFR 211.68(a), 211.160(b)(4)). Usable on its calibration due date, not after
 * (common practice).
 */
export function checkEquipmentItem(field: { equipmentClass: string }, item: EquipmentFacts, today: string): EquipmentProblem[] {
	requireDate('today', today);
	const problems: EquipmentProblem[] = [];
	if (item.equipmentClass !== field.equipmentClass) problems.push('wrong-class');
	if (item.status !== 'in-service') problems.push('not-in-service');
	if (item.calibrationDueOn !== null) {
		requireDate('calibrationDueOn', item.calibrationDueOn);
		if (item.calibrationDueOn < today) problems.push('calibration-overdue');
	}
	return problems;
}
