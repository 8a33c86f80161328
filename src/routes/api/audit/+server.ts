import { error, json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { database } from '$lib/server/db';
import { getConfig } from '$lib/server/config';
import { listTrail, parseTrailQuery } from '$lib/server/audit/trail';

/** GET /api/audit?limit=&cursor=&batch=&actor=&action=&entity=&from=&to=&q= → { events, nextCursor } (newest first). */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'audit.read');
	const parsed = parseTrailQuery(event.url.searchParams);
	if (!parsed.success) error(400, { message: 'The filter is not valid.', issues: parsed.error.issues.map((i) => ({ path: i.path.join('.'), message: i.message })) });
	const { limit, cursor, ...filter } = parsed.data;
	return json(await listTrail(database.db, filter, { limit, cursor }, getConfig().RIMEBOOK_SITE_TIMEZONE));
};
