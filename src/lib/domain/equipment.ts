/**
 * Whether an item of equipment (and the instruments it measures with) may be used in a batch
 * step today. 21 CFR 211.68(a) and 211.160(b)(4): instruments are calibrated at suitable
 * intervals and those that do not meet the requirements are not used; 211.67: equipment is
 * cleaned before use. Pure, so the entry form in the browser and the server run the same check.
 */
export const EQUIPMENT_STATUSES = ['in-service', 'out-of-service', 'cleaning-due'] as const;
export type EquipmentStatusName = (typeof EQUIPMENT_STATUSES)[number];

export interface CalibratedItem {
	/** what the person reads: equipment code or instrument tag */
	label: string;
	status: EquipmentStatusName;
	calibratedOn: string | null;
	/** YYYY-MM-DD; null = no calibration required (e.g. a capper) */
	calibrationDueOn: string | null;
}

export type UsabilityProblem =
	| { item: string; kind: 'out-of-service' }
	| { item: string; kind: 'cleaning-due' }
	| { item: string; kind: 'calibration-overdue'; dueOn: string };

export interface Usability {
	usable: boolean;
	problems: UsabilityProblem[];
}

/**
 * True when the item is past its calibration due date on `today` (both YYYY-MM-DD in the site's
 * time zone). The due date itself is still inside the interval: the calibration is due *on* it.
 */
export function isCalibrationOverdue(calibrationDueOn: string | null, today: string): boolean {
	return calibrationDueOn !== null && today > calibrationDueOn;
}

/** Days from today to the due date (negative when overdue); null without a due date. */
export function daysUntilDue(calibrationDueOn: string | null, today: string): number | null {
	if (calibrationDueOn === null) return null;
	return Math.round((Date.parse(`${calibrationDueOn}T00:00:00Z`) - Date.parse(`${today}T00:00:00Z`)) / 86_400_000);
}

/** Checks the equipment and each instrument; usable only when nothing is wrong with any of them. */
export function checkEquipmentUsable(equipment: CalibratedItem, instruments: readonly CalibratedItem[], today: string): Usability {
	const problems: UsabilityProblem[] = [];
	for (const item of [equipment, ...instruments]) {
		if (item.status === 'out-of-service') problems.push({ item: item.label, kind: 'out-of-service' });
		else if (item.status === 'cleaning-due') problems.push({ item: item.label, kind: 'cleaning-due' });
		if (isCalibrationOverdue(item.calibrationDueOn, today)) {
			problems.push({ item: item.label, kind: 'calibration-overdue', dueOn: item.calibrationDueOn as string });
		}
	}
	return { usable: problems.length === 0, problems };
}

/** One plain sentence per problem, for error messages and audit reasons. */
export function describeUsabilityProblem(p: UsabilityProblem): string {
	switch (p.kind) {
		case 'out-of-service':
			return `${p.item} is out of service`;
		case 'cleaning-due':
			return `${p.item} is due for cleaning`;
		case 'calibration-overdue':
			return `${p.item} was due for calibration on ${p.dueOn}`;
	}
}
