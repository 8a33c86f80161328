import { error, json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { database } from '$lib/server/db';
import { listMappings, saveMapping, saveMappingSchema } from '$lib/server/cycles/mappings';
import { getEquipment } from '$lib/server/equipment/registry';
import { runUnitOfWork } from '$lib/server/work';
import { describeMappingIssues } from '$lib/domain/lyo/mapping';

/** GET /api/equipment/<id>/mappings → { mappings } saved for this lyophilizer. */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'cycle.read');
	return json({ mappings: await listMappings(database.db, event.params.id) });
};

/** POST /api/equipment/<id>/mappings { name, mapping } → the saved mapping (same name: replaced). */
export const POST: RequestHandler = async (event) => {
	const user = requirePermission(event, 'cycle.upload');
	const dryer = await getEquipment(database.db, event.params.id);
	if (!dryer || dryer.class !== 'lyophilizer') error(404, { message: 'No such lyophilizer.' });
	const body = saveMappingSchema.safeParse(await event.request.json().catch(() => null));
	if (!body.success) return json({ message: `The mapping is not valid: ${describeMappingIssues(body.error).join('; ')}` }, { status: 400 });
	const saved = await runUnitOfWork(database.db, { id: user.id, name: user.name }, (uow) => saveMapping(uow, dryer.id, body.data));
	return json(saved, { status: 201 });
};
