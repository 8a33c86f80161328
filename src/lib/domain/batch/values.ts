/**
 * What an operator enters for one field of a step, read and checked the same way in the browser
 * (live) and on the server (authoritatively, against the frozen snapshot). Pure, no I/O.
 *
 * Numbers: judged exactly as entered in the field's unit (limits.ts, "The rule"). A number may be
 * typed in another unit of the same quantity (the person's preferred unit, units.ts); it is then
 * converted exactly to the field's unit (12 significant digits, dropping binary noise) and that
 * value is judged. The stored record keeps what was typed, its unit, the value in the field's
 * unit and the canonical SI-based value (design.md, "Units"; ALCOA+ "Original").
 */
import type { Field } from '$lib/schemas/template';
import { parseEntry } from '../limits';
import { canonicalUnitOf, convertUnit, isUnit, parseUnit, quantityOf, toCanonical, type Unit } from '../units';
import { normalizeUnit } from '../formula';

export interface StoredNumber {
	kind: 'number';
	/** As typed, and the unit it was typed in ('' = the field's unit had none). */
	text: string;
	unit: string;
	/** In the field's unit: the value judged against the limits. */
	value: number;
	/** In the canonical unit of its quantity, when the quantity is one units.ts knows. */
	canonical: { value: number; unit: Unit } | null;
}
export interface StoredRepeated {
	kind: 'repeated';
	texts: string[];
	unit: string;
	values: number[];
}
export interface StoredMaterial {
	kind: 'material';
	lotNumber: string;
	lotId: string;
	itemCode: string;
	status: string;
	expiresOn: string;
}
export interface StoredEquipment {
	kind: 'equipment';
	code: string;
	equipmentId: string;
	name: string;
	status: string;
	calibrationDueOn: string | null;
}
export interface StoredAttachment {
	kind: 'attachment';
	attachmentId: string;
	sha256: string;
	filename: string;
	contentType: string;
	size: number;
}
/**
 * The cycle run a recipe step takes (issue 7, "Into the batch record"): its id and the SHA-256 of
 * the uploaded file and of the stored series, so the "performed" signature binds the evidence
 * (21 CFR 11.70: the signature is linked to its record).
 */
export interface StoredCycleRun {
	kind: 'cycle-run';
	runId: string;
	equipmentCode: string;
	fileName: string;
	fileSha256: string;
	seriesSha256: string;
	samples: number;
	durationS: number;
	excursions: number;
	uploadedAt: string;
}
export type StoredValue =
	| StoredNumber
	| StoredRepeated
	| { kind: 'text'; value: string }
	| { kind: 'choice'; value: string[] }
	| { kind: 'check'; value: boolean }
	| { kind: 'datetime'; value: string }
	| StoredMaterial
	| StoredEquipment
	| StoredAttachment
	| StoredCycleRun;

export type ValueProblemCode =
	| 'required'
	| 'not-a-number'
	| 'too-many-decimals'
	| 'wrong-unit'
	| 'wrong-type'
	| 'too-long'
	| 'not-an-option'
	| 'not-a-date'
	| 'in-the-future'
	| 'wrong-count'
	| 'not-entered';

export interface ValueProblem {
	field: string;
	code: ValueProblemCode | (string & {});
	message: string;
}

export type ReadResult<T> = { ok: true; value: T } | { ok: false; problem: ValueProblem };

/** The units of a field's quantity, when units.ts knows it (°C/°F/K, Pa/mbar/…, g/kg/mg, mL/L, s/min/h). */
export function knownUnitOf(fieldUnit: string): Unit | null {
	if (!fieldUnit) return null;
	return isUnit(fieldUnit) ? fieldUnit : parseUnit(fieldUnit);
}

/** The units a value of the field may be typed in: its own, and any of the same quantity. */
export function acceptedUnits(fieldUnit: string): string[] {
	const u = knownUnitOf(fieldUnit);
	if (!u) return [fieldUnit];
	const q = quantityOf(u);
	return (['degC', 'degF', 'K', 'Pa', 'mbar', 'ubar', 'mTorr', 'Torr', 'g', 'mg', 'kg', 'mL', 'L', 'uL', 's', 'min', 'h'] as Unit[]).filter((x) => quantityOf(x) === q);
}

/**
 * The decimals allowed in another unit: enough to state the field's resolution there and no
 * more (a field read to 0.1 °C takes 0.1 °F; read to 0.1 g it takes 0.0001 kg).
 */
export function decimalsIn(fieldUnit: Unit, decimals: number, entered: Unit): number {
	if (fieldUnit === entered) return decimals;
	const ratio = Math.abs(convertUnit(1, fieldUnit, entered) - convertUnit(0, fieldUnit, entered));
	return Math.max(0, Math.ceil(decimals - Math.log10(ratio) - 1e-9));
}

function problem(field: string, code: ValueProblem["code"], message: string): { ok: false; problem: ValueProblem } {
	return { ok: false, problem: { field, code, message } };
}

function asText(raw: unknown): string | null {
	if (typeof raw === 'string') return raw;
	if (typeof raw === 'number' && Number.isFinite(raw)) return String(raw);
	return null;
}

/** A number typed as text (or a JSON number), optionally with the unit it was typed in. */
export function readNumber(field: { key: string; unit: string; decimals: number }, raw: unknown, unitText?: string): ReadResult<StoredNumber> {
	let text: string | null;
	let unit = unitText;
	if (raw !== null && typeof raw === 'object' && !Array.isArray(raw)) {
		const o = raw as { value?: unknown; unit?: unknown };
		text = asText(o.value);
		if (o.unit !== undefined) {
			if (typeof o.unit !== 'string') return problem(field.key, 'wrong-unit', 'the unit must be text');
			unit = o.unit;
		}
	} else text = asText(raw);
	if (text === null) return problem(field.key, 'wrong-type', 'a number is expected');
	const fieldKnown = knownUnitOf(field.unit);
	let enteredUnit: Unit | null = fieldKnown;
	if (unit !== undefined && unit.trim() !== '' && normalizeUnit(unit) !== normalizeUnit(field.unit)) {
		const parsed = knownUnitOf(unit.trim());
		if (!fieldKnown || !parsed || quantityOf(parsed) !== quantityOf(fieldKnown)) {
			return problem(field.key, 'wrong-unit', `a value in ${unit} cannot be taken for a field in ${field.unit || 'no unit'}`);
		}
		enteredUnit = parsed;
	}
	const decimals = fieldKnown && enteredUnit ? decimalsIn(fieldKnown, field.decimals, enteredUnit) : field.decimals;
	const parsed = parseEntry(text, decimals);
	if (!parsed.ok) return problem(field.key, parsed.code, parsed.message);
	let value = parsed.value;
	if (fieldKnown && enteredUnit && enteredUnit !== fieldKnown) value = Number(convertUnit(parsed.value, enteredUnit, fieldKnown).toPrecision(12));
	const canonical = enteredUnit
		? { value: Number(toCanonical(parsed.value, enteredUnit).toPrecision(15)), unit: canonicalUnitOf(quantityOf(enteredUnit)) }
		: null;
	return { ok: true, value: { kind: 'number', text: text.trim(), unit: enteredUnit ?? field.unit, value, canonical } };
}

function isBlank(raw: unknown): boolean {
	return raw === undefined || raw === null || (typeof raw === 'string' && raw.trim() === '') || (Array.isArray(raw) && raw.length === 0);
}

/**
 * Reads the value of a field kind that needs no look-up (everything but material, equipment and
 * attachment, whose facts come from the database). `undefined` means "left empty"; the caller
 * decides whether that is allowed (required fields). Calculated and computed yield fields take
 * no value; a recipe field's run is looked up by the server.
 */
export function readPlainValue(field: Field, raw: unknown, options: { now: Date }): ReadResult<StoredValue> | { ok: true; value: undefined } {
	if (isBlank(raw)) return { ok: true, value: undefined };
	switch (field.kind) {
		case 'number':
			return readNumber(field, raw);
		case 'yield':
			if (field.actualFormula) return { ok: true, value: undefined };
			return readNumber({ key: field.key, unit: field.unit, decimals: 0 }, raw);
		case 'repeated': {
			if (!Array.isArray(raw)) return problem(field.key, 'wrong-type', `a list of ${field.count} readings is expected`);
			if (raw.length !== field.count) return problem(field.key, 'wrong-count', `enter all ${field.count} readings (${raw.length} given)`);
			const texts: string[] = [];
			const values: number[] = [];
			for (const [i, r] of raw.entries()) {
				const n = readNumber({ key: field.key, unit: field.unit, decimals: field.decimals }, r);
				if (!n.ok) return problem(field.key, n.problem.code, `reading ${i + 1}: ${n.problem.message}`);
				if (n.value.unit !== field.unit && normalizeUnit(n.value.unit) !== normalizeUnit(field.unit)) return problem(field.key, 'wrong-unit', 'readings are entered in the field unit');
				texts.push(n.value.text);
				values.push(n.value.value);
			}
			return { ok: true, value: { kind: 'repeated', texts, unit: field.unit, values } };
		}
		case 'text': {
			if (typeof raw !== 'string') return problem(field.key, 'wrong-type', 'text is expected');
			if (raw.length > field.maxLength) return problem(field.key, 'too-long', `at most ${field.maxLength} characters`);
			return { ok: true, value: { kind: 'text', value: raw } };
		}
		case 'choice': {
			const chosen = Array.isArray(raw) ? raw : [raw];
			if (!chosen.every((c): c is string => typeof c === 'string')) return problem(field.key, 'wrong-type', 'an option is expected');
			if (!field.multiple && chosen.length > 1) return problem(field.key, 'wrong-type', 'choose one option');
			const unknown = chosen.find((c) => !field.options.some((o) => o.value === c));
			if (unknown !== undefined) return problem(field.key, 'not-an-option', `'${unknown}' is not one of the options`);
			return { ok: true, value: { kind: 'choice', value: [...new Set(chosen)] } };
		}
		case 'check': {
			if (typeof raw !== 'boolean') return problem(field.key, 'wrong-type', 'yes or no is expected');
			return { ok: true, value: { kind: 'check', value: raw } };
		}
		case 'datetime': {
			if (typeof raw !== 'string') return problem(field.key, 'wrong-type', 'a date and time is expected');
			const at = readInstant(raw);
			if (at === null) return problem(field.key, 'not-a-date', `'${raw}' is not a date and time`);
			// A record of work done cannot be dated after it is made (ALCOA+ "Contemporaneous"); a minute of clock skew is allowed.
			if (at.getTime() > options.now.getTime() + 60_000) return problem(field.key, 'in-the-future', 'a time in the future cannot be recorded');
			return { ok: true, value: { kind: 'datetime', value: at.toISOString() } };
		}
		default:
			return { ok: true, value: undefined };
	}
}

/** ISO 8601 date-time with a zone (Z or ±hh:mm), or a local "YYYY-MM-DDTHH:mm" from a datetime-local input read as UTC offset-free only by the caller. */
export function readInstant(text: string): Date | null {
	if (!/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2}(\.\d{1,6})?)?(Z|[+-]\d{2}:\d{2})$/.test(text.trim())) return null;
	const d = new Date(text.trim());
	return Number.isNaN(d.getTime()) ? null : d;
}

/**
 * Which fields of a step take a value from the person (not calculated, not a computed yield). A
 * recipe field takes the cycle run uploaded for the step (its id; checked on the server).
 */
export function isEnteredField(field: Field): boolean {
	if (field.kind === 'calculated') return false;
	if (field.kind === 'yield') return !field.actualFormula;
	return true;
}
