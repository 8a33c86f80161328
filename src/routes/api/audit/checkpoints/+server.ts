import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { database } from '$lib/server/db';
import { listCheckpoints } from '$lib/server/audit/checkpoint';

/** GET /api/audit/checkpoints → { checkpoints: SignedCheckpoint[] } (newest first). */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'audit.read');
	return json({ checkpoints: await listCheckpoints(database.db) });
};
