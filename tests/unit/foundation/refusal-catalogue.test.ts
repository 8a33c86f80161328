/**
 * The refusals of the leak-test service and the equipment registry carry a stable code, the HTTP
 * status of style.md ("400 bad input, 404 missing, 409 the record's state forbids it, 422 the data
 * lacks what is needed") and params; pages show the catalogue's words for the code in the person's
 * language, never the service's English (project rule: all UI text through src/lib/i18n).
 * The German is the author's own (from memory, plain wording), not taken from a glossary.
 * Equipment codes, batch numbers and tags are invented.
 */
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { LeakTestError, type AnyLeakTestError, type LeakTestErrorCode } from '$lib/server/cycles/leak';
import { leakTestErrorText } from '$lib/server/cycles/http';
import { calibrationSchema, EquipmentError, instrumentSchema, statusChangeSchema, type AnyEquipmentError, type EquipmentErrorCode } from '$lib/server/equipment/registry';
import { equipmentErrorText, equipmentInputErrorText } from '$lib/server/equipment/http';

const leakCases: { code: LeakTestErrorCode; status: number; params: Record<string, string>; shown: string[] }[] = [
	{ code: 'equipment-not-found', status: 404, params: {}, shown: [] },
	{ code: 'no-leak-properties', status: 409, params: { equipment: 'LYO-Q7' }, shown: ['LYO-Q7'] },
	{ code: 'run-not-found', status: 404, params: {}, shown: [] },
	{ code: 'batch-closed', status: 409, params: { batch: 'BX-1', status: 'released' }, shown: ['BX-1'] },
	{ code: 'no-manometer', status: 422, params: {}, shown: [] },
	{ code: 'too-few-readings', status: 422, params: {}, shown: [] },
	{ code: 'invalid-window', status: 400, params: {}, shown: [] }
];

const equipmentCases: { code: EquipmentErrorCode; status: number; params: Record<string, string>; shown: string[] }[] = [
	{ code: 'equipment-exists', status: 409, params: { equipment: 'BAL-Q2' }, shown: ['BAL-Q2'] },
	{ code: 'not-found', status: 404, params: {}, shown: [] },
	{ code: 'instrument-not-found', status: 404, params: {}, shown: [] },
	{ code: 'same-status', status: 409, params: { status: 'out-of-service' }, shown: [] },
	{ code: 'instrument-exists', status: 409, params: { equipment: 'LYO-Q7', tag: 'TI-204' }, shown: ['LYO-Q7', 'TI-204'] }
];

describe('leak-test refusals', () => {
	it.each(leakCases)('$code: status $status, words in English and German with its params', ({ code, status, params, shown }) => {
		const english = 'English text for the logs';
		const err = new LeakTestError(code, english, params as never) as AnyLeakTestError;
		expect(err.code).toBe(code);
		expect(err.status).toBe(status);
		expect(err.message).toBe(english);
		expect(err.params).toEqual(params);
		const en = leakTestErrorText(err, 'en');
		const de = leakTestErrorText(err, 'de');
		expect(en).not.toBe(english);
		expect(en.length).toBeGreaterThan(5);
		expect(de, 'German falls back to English: no translation').not.toBe(en);
		for (const p of shown) {
			expect(en).toContain(p);
			expect(de).toContain(p);
		}
	});

	it('names the batch status in the catalogue’s words, not the stored state name', () => {
		const err = new LeakTestError('batch-closed', 'Batch BX-1 is released; …', { batch: 'BX-1', status: 'released' });
		// The batch status labels of en/de batches.ts ("Released", "Freigegeben").
		expect(leakTestErrorText(err, 'en')).toBe('Batch BX-1 is closed (Released): nothing more can be recorded on its runs.');
		expect(leakTestErrorText(err, 'de')).toBe('Die Charge BX-1 ist abgeschlossen (Freigegeben): zu ihren Läufen kann nichts mehr erfasst werden.');
	});
});

describe('equipment registry refusals', () => {
	it.each(equipmentCases)('$code: status $status, words in English and German with its params', ({ code, status, params, shown }) => {
		const english = 'English text for the logs';
		const err = new EquipmentError(code, english, params as never) as AnyEquipmentError;
		expect(err.code).toBe(code);
		expect(err.status).toBe(status);
		expect(err.params).toEqual(params);
		const en = equipmentErrorText(err, 'en');
		const de = equipmentErrorText(err, 'de');
		expect(en).not.toBe(english);
		expect(de, 'German falls back to English: no translation').not.toBe(en);
		for (const p of shown) {
			expect(en).toContain(p);
			expect(de).toContain(p);
		}
	});

	it('names an unchanged status by its label (equipment.status), not its stored name', () => {
		const err = new EquipmentError('same-status', 'The status is already "out-of-service".', { status: 'out-of-service' });
		expect(equipmentErrorText(err, 'en')).toBe('The status is already “Out of service”.');
		expect(equipmentErrorText(err, 'de')).toBe('Der Status ist bereits „Außer Betrieb“.');
	});
});

describe('equipment form input refused by the schemas', () => {
	const zodError = (schema: z.ZodType, input: unknown) => {
		const parsed = schema.safeParse(input);
		if (parsed.success) throw new Error('expected the schema to refuse the input');
		return parsed.error;
	};

	it('names the fields by the form’s labels (equipment.manage), without zod’s English', () => {
		const err = zodError(instrumentSchema, { tag: '', name: 'Shelf probe', role: 'shelf', calibratedOn: null, calibrationDueOn: null, reason: 'x' });
		const en = equipmentInputErrorText(err, 'en');
		expect(en.fields).toEqual(['tag', 'reason']);
		expect(en.message).toBe('Check these fields: Tag, Reason for the change.');
		expect(equipmentInputErrorText(err, 'de').message).toBe('Bitte prüfen Sie diese Felder: Messstelle, Grund der Änderung.');
		for (const issue of err.issues) expect(en.message).not.toContain(issue.message);
	});

	it('says a due date before the calibration date as itself', () => {
		const err = zodError(calibrationSchema, { calibratedOn: '2026-07-02', calibrationDueOn: '2026-07-01', reference: 'CAL-Q-1', reason: 'Annual calibration' });
		expect(equipmentInputErrorText(err, 'en')).toEqual({ message: 'The next due date is before the calibration date.', fields: ['calibrationDueOn'] });
		expect(equipmentInputErrorText(err, 'de').message).toBe('Das nächste Fälligkeitsdatum liegt vor dem Kalibrierdatum.');
	});

	it('an unknown status value is a "check the field" refusal naming the status field', () => {
		const err = zodError(statusChangeSchema, { status: 'melted', reason: 'Because' });
		expect(equipmentInputErrorText(err, 'en').message).toBe('Check these fields: New status.');
		expect(equipmentInputErrorText(err, 'de').message).toBe('Bitte prüfen Sie diese Felder: Neuer Status.');
	});
});
