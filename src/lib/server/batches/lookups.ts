import { eq } from 'drizzle-orm';
import type { Executor } from '../db/client';
import { batch, equipment, material, materialLot } from '../db/schema';
import type { Template } from '$lib/schemas/template';

/** What the entry checks need of a scanned lot (limits.ts checkLot). */
export interface LotRecord {
	id: string;
	lotNumber: string;
	itemCode: string;
	itemName: string;
	status: string;
	expiresOn: string;
}

/** What the entry checks need of a scanned equipment item (limits.ts checkEquipmentItem). */
export interface EquipmentRecord {
	id: string;
	code: string;
	name: string;
	equipmentClass: string;
	status: string;
	calibrationDueOn: string | null;
}

/**
 * Finds a lot by the number on its label, as a scanner reads it. Lot numbers are unique per item;
 * if two items share one, the lot of `preferItem` wins (the field names the item it wants).
 */
export async function findLot(db: Executor, lotNumber: string, preferItem?: string): Promise<LotRecord | null> {
	const rows = await db
		.select({ id: materialLot.id, lotNumber: materialLot.lotNumber, itemCode: material.code, itemName: material.name, status: materialLot.status, expiresOn: materialLot.expiresOn })
		.from(materialLot)
		.innerJoin(material, eq(material.id, materialLot.materialId))
		.where(eq(materialLot.lotNumber, lotNumber.trim()));
	return rows.find((r) => r.itemCode === preferItem) ?? rows[0] ?? null;
}

export async function findEquipment(db: Executor, code: string): Promise<EquipmentRecord | null> {
	const [row] = await db
		.select({ id: equipment.id, code: equipment.code, name: equipment.name, equipmentClass: equipment.class, status: equipment.status, calibrationDueOn: equipment.calibrationDueOn })
		.from(equipment)
		.where(eq(equipment.code, code.trim().toUpperCase()));
	return row ?? null;
}

/**
 * The item codes a batch's frozen template names (material fields and step materials): the only
 * items a lot looked up for this batch can be checked against. Null when there is no such batch.
 */
export async function batchItemCodes(db: Executor, batchId: string): Promise<Set<string> | null> {
	const [b] = await db.select({ snapshot: batch.snapshot }).from(batch).where(eq(batch.id, batchId));
	if (!b) return null;
	const template = b.snapshot as Template;
	const codes = new Set<string>();
	for (const step of template.sections.flatMap((s) => s.steps)) {
		for (const m of step.materials) codes.add(m.itemCode);
		for (const f of step.fields) if (f.kind === 'material') codes.add(f.itemCode);
	}
	return codes;
}
