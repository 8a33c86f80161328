import { checkEquipmentUsable, type CalibratedItem, type Usability } from '$lib/domain/equipment';
import { dateInZone } from '$lib/domain/time';
import { getConfig } from '../config';
import type { Executor } from '../db/client';
import { getEquipment, listInstruments } from './registry';

export { checkEquipmentUsable, describeUsabilityProblem, isCalibrationOverdue } from '$lib/domain/equipment';
export type { Usability, UsabilityProblem } from '$lib/domain/equipment';

/** Today's date at the site (calibration due dates are calendar dates at the site). */
export function siteToday(now: Date = new Date()): string {
	return dateInZone(now, getConfig().RIMEBOOK_SITE_TIMEZONE);
}

/**
 * For the batch step entry flow (execution): may this equipment be used in a batch step today?
 * Checks the equipment and every instrument it measures with (21 CFR 211.68(a), 211.160(b)(4)).
 * Null when the equipment does not exist.
 */
export async function checkEquipmentUsableById(db: Executor, equipmentId: string, today: string = siteToday()): Promise<(Usability & { code: string; class: string }) | null> {
	const item = await getEquipment(db, equipmentId);
	if (!item) return null;
	const instruments = await listInstruments(db, equipmentId);
	const asItem = (label: string, r: { status: CalibratedItem['status']; calibratedOn: string | null; calibrationDueOn: string | null }): CalibratedItem => ({
		label,
		status: r.status,
		calibratedOn: r.calibratedOn,
		calibrationDueOn: r.calibrationDueOn
	});
	const result = checkEquipmentUsable(
		asItem(item.code, item),
		instruments.map((i) => asItem(`${item.code} ${i.tag}`, i)),
		today
	);
	return { ...result, code: item.code, class: item.class };
}
