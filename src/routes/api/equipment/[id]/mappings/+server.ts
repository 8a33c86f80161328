import { error, json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { database } from '$lib/server/db';
import { listMappings, saveLyophilizerMapping, saveMappingSchema } from '$lib/server/cycles/mappings';
import { describeMappingIssues } from '$lib/domain/lyo/mapping';
import { describeRunError, readJsonBody } from '$lib/server/cycles/upload';

/** GET /api/equipment/<id>/mappings → { mappings } saved for this lyophilizer. */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'cycle.read');
	return json({ mappings: await listMappings(database.db, event.params.id) });
};

/** POST /api/equipment/<id>/mappings { name, mapping } → the saved mapping (same name: replaced). */
export const POST: RequestHandler = async (event) => {
	const user = requirePermission(event, 'cycle.upload');
	let raw: unknown;
	try {
		raw = await readJsonBody(event.request);
	} catch (e) {
		const refusal = describeRunError(e);
		if (refusal) return json(refusal.body, { status: refusal.status });
		throw e;
	}
	const body = saveMappingSchema.safeParse(raw);
	if (!body.success) return json({ message: `The mapping is not valid: ${describeMappingIssues(body.error).join('; ')}` }, { status: 400 });
	const saved = await saveLyophilizerMapping(database.db, { id: user.id, name: user.name }, event.params.id, body.data);
	if (!saved) error(404, { message: 'No such lyophilizer.' });
	return json(saved, { status: 201 });
};
