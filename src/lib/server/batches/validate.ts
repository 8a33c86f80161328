import { and, eq } from 'drizzle-orm';
import type { Executor } from '../db/client';
import { attachment, blob } from '../db/schema';
import type { Step } from '$lib/schemas/template';
import { checkEquipmentItem, checkLot } from '$lib/domain/limits';
import { dateInZone } from '$lib/domain/time';
import { isEnteredField, readPlainValue, type StoredValue, type ValueProblem } from '$lib/domain/batch/values';
import { describeUsabilityProblem } from '$lib/domain/equipment';
import { checkEquipmentUsableById } from '../equipment/usable';
import { findEquipment, findLot } from './lookups';
import { lotProblemMessage, equipmentProblemMessage } from './messages';
import { readStepRun } from './runs';

/**
 * Reads and checks every value of a step on the server: the same pure readers as the browser,
 * plus the look-ups only the server can make (21 CFR 11.10(h): the lot, the instrument and the
 * file named are real and fit for use). Returns the values to store, or every problem found.
 */
export async function readStepValues(
	db: Executor,
	input: { batchId: string; step: Step; raw: Record<string, unknown>; now: Date; timeZone: string }
): Promise<{ values: Map<string, StoredValue>; problems: ValueProblem[] }> {
	const { step, raw, now } = input;
	const values = new Map<string, StoredValue>();
	const problems: ValueProblem[] = [];
	const known = new Set(step.fields.filter(isEnteredField).map((f) => f.key));
	for (const key of Object.keys(raw)) {
		if (!known.has(key)) problems.push({ field: key, code: 'wrong-type', message: `'${key}' is not a field of this step that takes a value` });
	}
	const today = dateInZone(now, input.timeZone);
	for (const field of step.fields) {
		if (!isEnteredField(field)) continue;
		const r = raw[field.key];
		if (field.kind === 'recipe') {
			// The freeze-drying step takes the cycle run uploaded for it (issue 7): checked before
			// the blank test, since with one run uploaded the person need not pick it.
			const read = await readStepRun(db, { batchId: input.batchId, stepKey: step.key, raw: r });
			if (read.ok) values.set(field.key, read.value);
			else if (read.code !== 'no-run' || field.required) problems.push({ field: field.key, code: read.code, message: `${field.label}: ${read.message}` });
			continue;
		}
		const blank = r === undefined || r === null || (typeof r === 'string' && r.trim() === '') || (Array.isArray(r) && r.length === 0);
		if (blank) {
			if (field.required) problems.push({ field: field.key, code: 'required', message: `${field.label}: a value is required` });
			continue;
		}
		if (field.kind === 'material') {
			if (typeof r !== 'string') {
				problems.push({ field: field.key, code: 'wrong-type', message: `${field.label}: a lot number is expected` });
				continue;
			}
			const lot = await findLot(db, r, field.itemCode);
			if (!lot) {
				problems.push({ field: field.key, code: 'not-entered', message: `${field.label}: lot ${r} is not known` });
				continue;
			}
			// 21 CFR 211.84(a), 211.86: only released, unexpired lots of the right item.
			const found = checkLot(field, lot, today);
			if (found.length > 0) {
				problems.push({ field: field.key, code: found[0], message: `${field.label}: ${found.map((p) => lotProblemMessage(p, lot, field.itemCode)).join('; ')}` });
				continue;
			}
			values.set(field.key, { kind: 'material', lotNumber: lot.lotNumber, lotId: lot.id, itemCode: lot.itemCode, status: lot.status, expiresOn: lot.expiresOn });
		} else if (field.kind === 'equipment') {
			if (typeof r !== 'string') {
				problems.push({ field: field.key, code: 'wrong-type', message: `${field.label}: an equipment ID is expected` });
				continue;
			}
			const item = await findEquipment(db, r);
			if (!item) {
				problems.push({ field: field.key, code: 'not-entered', message: `${field.label}: equipment ${r} is not known` });
				continue;
			}
			// The class the step asks for (limits.ts); then the equipment and every instrument it
			// measures with: in service, clean and in calibration (21 CFR 211.67, 211.68(a),
			// 211.160(b)(4); 11.10(h): the device is valid for the step).
			const wrongClass = checkEquipmentItem(field, item, today).filter((p) => p === 'wrong-class');
			if (wrongClass.length > 0) {
				problems.push({ field: field.key, code: 'wrong-class', message: `${field.label}: ${equipmentProblemMessage('wrong-class', item, field.equipmentClass)}` });
				continue;
			}
			const usable = await checkEquipmentUsableById(db, item.id, today);
			if (!usable || !usable.usable) {
				const found = usable?.problems ?? [];
				const code = found[0]?.kind === 'calibration-overdue' ? 'calibration-overdue' : 'not-in-service';
				problems.push({ field: field.key, code, message: `${field.label}: ${found.length > 0 ? found.map(describeUsabilityProblem).join('; ') : `equipment ${r} is not known`}` });
				continue;
			}
			values.set(field.key, { kind: 'equipment', code: item.code, equipmentId: item.id, name: item.name, status: item.status, calibrationDueOn: item.calibrationDueOn });
		} else if (field.kind === 'attachment') {
			if (typeof r !== 'string') {
				problems.push({ field: field.key, code: 'wrong-type', message: `${field.label}: an uploaded file is expected` });
				continue;
			}
			const [a] = await db
				.select({ id: attachment.id, sha256: attachment.sha256, filename: attachment.filename, contentType: attachment.contentType, size: attachment.size, fieldKey: attachment.fieldKey })
				.from(attachment)
				.innerJoin(blob, eq(blob.sha256, attachment.sha256))
				.where(and(eq(attachment.id, r), eq(attachment.batchId, input.batchId), eq(attachment.stepKey, step.key)));
			if (!a || (a.fieldKey !== null && a.fieldKey !== field.key)) {
				problems.push({ field: field.key, code: 'not-entered', message: `${field.label}: the file is not one uploaded to this step` });
				continue;
			}
			if (!field.accept.includes(a.contentType) || a.size > field.maxSizeMb * 1024 * 1024) {
				problems.push({ field: field.key, code: 'wrong-type', message: `${field.label}: ${a.filename} is not a ${field.accept.join(', ')} file of at most ${field.maxSizeMb} MB` });
				continue;
			}
			values.set(field.key, { kind: 'attachment', attachmentId: a.id, sha256: a.sha256, filename: a.filename, contentType: a.contentType, size: a.size });
		} else {
			const read = readPlainValue(field, r, { now });
			if (!read.ok) problems.push({ ...read.problem, message: `${field.label}: ${read.problem.message}` });
			else if (read.value !== undefined) values.set(field.key, read.value);
		}
	}
	return { values, problems };
}
