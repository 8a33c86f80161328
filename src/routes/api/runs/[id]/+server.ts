import { error, json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { database } from '$lib/server/db';
import { getRun } from '$lib/server/cycles/runs';
import { listSeriesChannels } from '$lib/server/cycles/series-store';

/** GET /api/runs/<id> → the run: equipment, batch and step, file identity, mapping, recipe, analysis, channels. */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'cycle.read');
	const run = await getRun(database.db, event.params.id);
	if (!run) error(404, { message: 'No such run.' });
	const channels = (await listSeriesChannels(database.db, run.id)).filter((c) => c.ordinal > 0).map(({ column, role, unit }) => ({ id: column, role, unit }));
	return json({ ...run, channels });
};
