import type { PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { listEquipment } from '$lib/server/equipment/registry';
import { siteToday } from '$lib/server/equipment/usable';

export const load = (async (event) => {
	requirePermission(event, 'equipment.read');
	const rows = await listEquipment(database.db);
	return {
		today: siteToday(),
		equipment: rows.map(({ id, code, name, class: cls, location, status, calibrationDueOn }) => ({ id, code, name, class: cls, location, status, calibrationDueOn }))
	};
}) satisfies PageServerLoad;
