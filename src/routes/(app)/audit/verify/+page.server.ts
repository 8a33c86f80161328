import type { Actions, PageServerLoad } from './$types';
import { fail } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/auth/guard';
import { hasPermission } from '$lib/domain/permissions';
import { getConfig } from '$lib/server/config';
import { database } from '$lib/server/db';
import { createCheckpoint, getPublicSiteKey, listCheckpoints } from '$lib/server/audit/checkpoint';

// The verification itself runs from the page through GET /api/audit/verify, so a long run shows progress.
// The checkpoint schedule is started once by hooks init, not here (finding 33); the key is made at
// start-up or by the first checkpoint, never by this read (finding 16).
export const load = (async (event) => {
	const user = requirePermission(event, 'audit.read');
	return {
		timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE,
		checkpoints: (await listCheckpoints(database.db, { limit: 20 })).map(({ size, root, at, keyId }) => ({ size, root, at, keyId })),
		key: await getPublicSiteKey(database.db),
		// Inspectors read and verify but change nothing (21 CFR 11.10(d)): only holders of
		// audit.checkpoint see the form whose action demands it (finding 7).
		canCheckpoint: hasPermission(user.roles, 'audit.checkpoint') && (!user.tokenPermissions || user.tokenPermissions.includes('audit.checkpoint'))
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
