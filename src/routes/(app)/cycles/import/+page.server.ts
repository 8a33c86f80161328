import type { PageServerLoad } from './$types';
import { inArray } from 'drizzle-orm';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { batch } from '$lib/server/db/schema';
import { listEquipment } from '$lib/server/equipment/registry';
import { listMappings } from '$lib/server/cycles/mappings';

interface SnapshotLike {
	sections?: { steps?: { key?: string; title?: string; fields?: { kind?: string }[] }[] }[];
}

export const load = (async (event) => {
	requirePermission(event, 'cycle.upload');
	const dryers = (await listEquipment(database.db)).filter((e) => e.class === 'lyophilizer');
	const mappings = Object.fromEntries(await Promise.all(dryers.map(async (d) => [d.id, await listMappings(database.db, d.id)] as const)));
	// Batches being executed whose master has a freeze-drying step: their recipe is the one checked.
	const open = await database.db.select({ id: batch.id, number: batch.number, snapshot: batch.snapshot }).from(batch).where(inArray(batch.status, ['issued', 'in-progress']));
	const batches = open
		.map((b) => ({
			id: b.id,
			number: b.number,
			steps: ((b.snapshot as SnapshotLike).sections ?? []).flatMap((s) => s.steps ?? []).filter((s) => s.fields?.some((f) => f.kind === 'recipe')).map((s) => ({ key: s.key ?? '', title: s.title ?? '' }))
		}))
		.filter((b) => b.steps.length > 0);
	return {
		dryers: dryers.map(({ id, code, name, status }) => ({ id, code, name, status })),
		mappings,
		batches,
		preselect: event.url.searchParams.get('equipment')
	};
}) satisfies PageServerLoad;
