/**
 * Showing stored values to a person: numbers in their preferred unit (design.md, "Units"), the
 * rest as recorded. Pure, for the batch page, the step page and their tests.
 */
import type { Field } from '$lib/schemas/template';
import type { StoredValue } from '$lib/domain/batch/values';
import type { Preferences } from '$lib/domain/batch/preferences';
import { fromCanonical, isUnit, labelUnit, quantityOf, type Unit } from '$lib/domain/units';
import type { Bounds } from '$lib/domain/limits';
import { formatFixed } from '$lib/domain/limits';
import { convertUnit } from '$lib/domain/units';
import { knownUnitOf } from '$lib/domain/batch/values';

export function unitLabel(unit: string): string {
	if (unit === '') return '';
	if (isUnit(unit)) return labelUnit(unit);
	const known = knownUnitOf(unit);
	return known ? labelUnit(known) : unit === 'percent' ? '%' : unit;
}

/** The unit a field's values are shown and typed in for this person (their preference where the quantity has one). */
export function preferredUnitOf(fieldUnit: string, prefs: Preferences): string {
	const known = knownUnitOf(fieldUnit);
	if (!known) return fieldUnit;
	if (quantityOf(known) === 'temperature') return prefs.temperatureUnit;
	if (quantityOf(known) === 'pressure') return prefs.pressureUnit;
	return known;
}

/** Decimals to show a value of a field in another unit (as many as the resolution needs there). */
function shownDecimals(field: { unit: string; decimals?: number }, unit: string): number {
	const d = field.decimals ?? 0;
	const from = knownUnitOf(field.unit);
	const to = knownUnitOf(unit);
	if (!from || !to || from === to) return d;
	const ratio = Math.abs(convertUnit(1, from, to) - convertUnit(0, from, to));
	return Math.max(0, Math.ceil(d - Math.log10(ratio) - 1e-9));
}

/** A stored number in the person's unit, e.g. "68.0 °F"; the stored canonical value is the source. */
export function formatNumber(v: Extract<StoredValue, { kind: 'number' }>, field: { unit: string; decimals?: number }, prefs: Preferences): string {
	const target = preferredUnitOf(field.unit, prefs);
	if (v.canonical && isUnit(target)) {
		const shown = fromCanonical(v.canonical.value, target);
		return `${formatFixed(shown, shownDecimals(field, target))} ${unitLabel(target)}`.trim();
	}
	return `${v.text} ${unitLabel(v.unit)}`.trim();
}

export function formatStored(v: StoredValue | undefined, field: Field, prefs: Preferences, words: { yes: string; no: string; when: (iso: string) => string }): string {
	if (!v) return '—';
	switch (v.kind) {
		case 'number':
			return formatNumber(v, field.kind === 'number' ? field : { unit: 'unit' in field ? String(field.unit) : '', decimals: 0 }, prefs);
		case 'repeated':
			return `${v.texts.join(' · ')} ${unitLabel(v.unit)}`;
		case 'text':
			return v.value;
		case 'choice':
			return v.value.map((c) => (field.kind === 'choice' ? (field.options.find((o) => o.value === c)?.label ?? c) : c)).join(', ');
		case 'check':
			return v.value ? words.yes : words.no;
		case 'datetime':
			return words.when(v.value);
		case 'material':
			return `${v.lotNumber} (${v.itemCode}, exp. ${v.expiresOn})`;
		case 'equipment':
			return `${v.code} · ${v.name}`;
		case 'attachment':
			return `${v.filename} (${Math.ceil(v.size / 1024)} kB)`;
		case 'cycle-run':
			return `${v.equipmentCode} · ${v.fileName} (SHA-256 ${v.fileSha256.slice(0, 12)}…)`;
	}
}

/** Limits in the person's unit, e.g. "597.0 … 603.0 g". */
export function formatBounds(bounds: Bounds | null, field: { unit: string; decimals?: number }, prefs: Preferences): string | null {
	if (!bounds || (bounds.min === undefined && bounds.max === undefined)) return null;
	const target = preferredUnitOf(field.unit, prefs);
	const from = knownUnitOf(field.unit);
	const d = shownDecimals(field, target);
	const show = (x: number | undefined) => {
		if (x === undefined) return '–';
		const y = from && isUnit(target) && from !== target ? convertUnit(x, from, target as Unit) : x;
		return formatFixed(y, d);
	};
	return `${show(bounds.min)} … ${show(bounds.max)} ${unitLabel(target)}`.trim();
}

/** A canonical reading (°C, Pa) in the person's unit, e.g. "−21.0 °C", "0.12 mbar"; other units as they are. */
export function formatReading(value: number, canonicalUnit: string, prefs: Preferences): string {
	if (canonicalUnit === 'degC' || canonicalUnit === 'Pa') {
		const target = canonicalUnit === 'degC' ? prefs.temperatureUnit : prefs.pressureUnit;
		const shown = fromCanonical(value, target);
		// Temperatures to 0.1; pressures to 3 significant digits (they span decades).
		const text = canonicalUnit === 'degC' ? formatFixed(shown, 1) : String(Number(shown.toPrecision(3)));
		return `${text} ${labelUnit(target)}`;
	}
	return `${Number(value.toPrecision(4))}${canonicalUnit ? ` ${unitLabel(canonicalUnit)}` : ''}`;
}
