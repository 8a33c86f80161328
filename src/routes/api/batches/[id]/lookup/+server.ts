import { error, json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { batchItemCodes, findEquipment, findLot } from '$lib/server/batches/lookups';
import { checkEquipmentUsableById } from '$lib/server/equipment/usable';
import { dateInZone } from '$lib/domain/time';
import { getConfig } from '$lib/server/config';

/**
 * What a scanned code is: a lot (`?lot=…&item=…`) or an equipment item (`?equipment=…`), with
 * the facts the browser checks live (the server checks them again when the step is signed).
 */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'batch.execute');
	const lot = event.url.searchParams.get('lot');
	const code = event.url.searchParams.get('equipment');
	// The lookup is for this batch: it must exist, and a lot is checked only against an item its template names.
	const items = await batchItemCodes(database.db, event.params.id);
	if (!items) error(404, { message: 'There is no such batch.' });
	if (lot) {
		const item = event.url.searchParams.get('item') ?? undefined;
		if (item !== undefined && (item.length > 40 || !items.has(item))) error(400, { message: 'That item is not one this batch uses.' });
		const found = await findLot(database.db, lot.slice(0, 80), item);
		return json({ lot: found ? { lotNumber: found.lotNumber, itemCode: found.itemCode, itemName: found.itemName, status: found.status, expiresOn: found.expiresOn } : null });
	}
	if (code) {
		const found = await findEquipment(database.db, code.slice(0, 80));
		if (!found) return json({ equipment: null });
		// The equipment and the instruments it measures with, as the server checks at entry (211.68(a)).
		const usable = await checkEquipmentUsableById(database.db, found.id, dateInZone(new Date(), getConfig().RIMEBOOK_SITE_TIMEZONE));
		return json({
			equipment: { code: found.code, name: found.name, equipmentClass: found.equipmentClass, status: found.status, calibrationDueOn: found.calibrationDueOn },
			problems: usable?.problems ?? []
		});
	}
	error(400, { message: 'Ask for ?lot= or ?equipment=.' });
};
