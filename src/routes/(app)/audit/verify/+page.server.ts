import type { Actions, PageServerLoad } from './$types';
import { fail } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/auth/guard';
import { getConfig } from '$lib/server/config';
import { database } from '$lib/server/db';
import { createCheckpoint, getSigningKey, listCheckpoints } from '$lib/server/audit/checkpoint';
import { ensureCheckpointSchedule } from '$lib/server/audit/schedule';

// The verification itself runs from the page through GET /api/audit/verify, so a long run shows progress.
export const load = (async (event) => {
	requirePermission(event, 'audit.read');
	ensureCheckpointSchedule(database.db);
	const key = await getSigningKey(database.db);
	return {
		timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE,
		checkpoints: (await listCheckpoints(database.db, { limit: 20 })).map(({ size, root, at, keyId }) => ({ size, root, at, keyId })),
		key: { id: key.id, publicKey: key.publicKey }
	};
}) satisfies PageServerLoad;

export const actions = {
	// Signing a checkpoint changes no GMP data, but it is a write: QA and admins only (inspectors change nothing).
	checkpoint: async (event) => {
		requirePermission(event, 'audit.checkpoint');
		const cp = await createCheckpoint(database.db);
		if (!cp) return fail(409, { message: 'empty' });
		return { signed: cp.size };
	}
} satisfies Actions;
