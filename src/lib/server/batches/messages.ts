import type { EquipmentProblem, LotProblem } from '$lib/domain/limits';
import type { EquipmentRecord, LotRecord } from './lookups';

/** Plain words for the refusals of lots and equipment (server side; the browser has the catalogue). */
export function lotProblemMessage(p: LotProblem, lot: LotRecord, wanted: string): string {
	if (p === 'wrong-item') return `lot ${lot.lotNumber} is ${lot.itemCode} (${lot.itemName}), not ${wanted}`;
	if (p === 'not-released') return `lot ${lot.lotNumber} is ${lot.status}, not released`;
	return `lot ${lot.lotNumber} expired on ${lot.expiresOn}`;
}

export function equipmentProblemMessage(p: EquipmentProblem, item: EquipmentRecord, wanted: string): string {
	if (p === 'wrong-class') return `${item.code} is a ${item.equipmentClass}, not a ${wanted}`;
	if (p === 'not-in-service') return item.status === 'cleaning-due' ? `${item.code} is due for cleaning` : `${item.code} is out of service`;
	return `${item.code} was due for calibration on ${item.calibrationDueOn}`;
}
