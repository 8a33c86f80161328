import { fail, type ActionFailure } from '@sveltejs/kit';
import { ZodError } from 'zod';
import { messagesFor, type Locale, type Messages } from '$lib/i18n';
import { isEquipmentError, type AnyEquipmentError } from './registry';

/** The words for a refusal in the person's language (catalogue equipment.errors). */
export function equipmentErrorText(err: AnyEquipmentError, locale: Locale): string {
	const t = messagesFor(locale).equipment;
	switch (err.code) {
		case 'equipment-exists':
			return t.errors['equipment-exists'](err.params);
		case 'instrument-exists':
			return t.errors['instrument-exists'](err.params);
		case 'same-status':
			return t.errors['same-status']({ status: t.status[err.params.status] ?? err.params.status });
		default:
			return t.errors[err.code];
	}
}

/** The catalogue label of each field the equipment page's forms send (equipment.manage). */
const fieldLabels: Record<string, keyof Messages['equipment']['manage']> = {
	target: 'target',
	status: 'newStatus',
	calibratedOn: 'calibratedOn',
	calibrationDueOn: 'dueOn',
	reference: 'reference',
	tag: 'tag',
	name: 'name',
	role: 'role',
	reason: 'reason'
};

/**
 * The words for input the schemas refuse, in the person's language: the fields by the labels the
 * form shows them with, never zod's English. `fields` are the form's own field names.
 */
export function equipmentInputErrorText(err: ZodError, locale: Locale): { message: string; fields: string[] } {
	const t = messagesFor(locale).equipment;
	const fieldOf = (i: ZodError['issues'][number]) => String(i.path[0] ?? '');
	// The one cross-field rule of the calibration forms: said as itself, not as "check the field".
	const isDueBefore = (i: ZodError['issues'][number]) => i.code === 'custom' && fieldOf(i) === 'calibrationDueOn';
	const fields = [...new Set(err.issues.map(fieldOf).filter(Boolean))];
	const dueBefore = err.issues.some(isDueBefore);
	const others = [...new Set(err.issues.filter((i) => !isDueBefore(i)).map(fieldOf).filter(Boolean))];
	const parts: string[] = [];
	if (dueBefore) parts.push(t.errors['due-before-calibration']);
	if (others.length) parts.push(t.errors['invalid-fields']({ fields: others.map((f) => (fieldLabels[f] ? t.manage[fieldLabels[f]] : f)).join(', ') }));
	return { message: parts.length ? parts.join(' ') : t.errors['invalid-input'], fields };
}

/**
 * A page action's answer to a refused registry change: the catalogue's words in the person's
 * language and the code prefixed like the other areas' page codes (deviations/http.ts); a schema
 * refusal names its fields. 404 for a missing item, 400 otherwise; anything else is thrown on.
 */
export function equipmentFailure(err: unknown, locale: Locale): ActionFailure<{ code: string; message: string; fields: string[] }> {
	if (isEquipmentError(err)) return fail(err.status === 404 ? 404 : 400, { code: `equipment.${err.code}`, message: equipmentErrorText(err, locale), fields: [] });
	if (err instanceof ZodError) return fail(400, { code: 'equipment.invalid-input', ...equipmentInputErrorText(err, locale) });
	throw err;
}
