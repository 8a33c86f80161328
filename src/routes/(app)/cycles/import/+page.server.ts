import type { PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { listEquipment } from '$lib/server/equipment/registry';
import { listMappings } from '$lib/server/cycles/mappings';
import { listOpenRecipeSteps } from '$lib/server/cycles/recipe-source';

export const load = (async (event) => {
	requirePermission(event, 'cycle.upload');
	const dryers = (await listEquipment(database.db)).filter((e) => e.class === 'lyophilizer');
	const mappings = Object.fromEntries(await Promise.all(dryers.map(async (d) => [d.id, await listMappings(database.db, d.id)] as const)));
	// Batches being executed whose master has a freeze-drying step: their recipe is the one checked.
	const batches = await listOpenRecipeSteps(database.db);
	// The step page links here with ?batch=…&step=…: preselect that step when it is one on offer.
	const batchId = event.url.searchParams.get('batch');
	const stepKey = event.url.searchParams.get('step');
	const offered = batches.some((b) => b.id === batchId && b.steps.some((s) => s.key === stepKey));
	return {
		dryers: dryers.map(({ id, code, name, status }) => ({ id, code, name, status })),
		mappings,
		batches,
		preselect: event.url.searchParams.get('equipment'),
		preselectStep: offered ? `${batchId}|${stepKey}` : null
	};
}) satisfies PageServerLoad;
