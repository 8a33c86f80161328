import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { database } from '$lib/server/db';
import { verifyChain } from '$lib/server/audit/verify';

/** GET /api/audit/verify[?engine=app|database&roots=1] → { ok, count, head, firstBreak, checkpoints, ... } */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'audit.read');
	const engine = event.url.searchParams.get('engine') === 'app' ? 'app' : 'database';
	const roots = event.url.searchParams.get('roots') === '1';
	return json(await verifyChain(database.db, { engine, roots }));
};
