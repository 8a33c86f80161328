import { json } from '@sveltejs/kit';
import { sql } from 'drizzle-orm';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { appVersion } from '$lib/server/version';

/** Liveness and readiness for load balancers and monitoring; public, reveals no data. */
export const GET: RequestHandler = async () => {
	try {
		await database.db.execute(sql`select 1`);
	} catch {
		return json({ status: 'unavailable', database: database.kind, version: appVersion }, { status: 503 });
	}
	return json({ status: 'ok', database: database.kind, version: appVersion });
};
