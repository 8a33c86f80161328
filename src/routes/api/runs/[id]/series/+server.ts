import { error, json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { database } from '$lib/server/db';
import { ChartRequestError, DEFAULT_MAX_POINTS, MAX_POINTS, serveChartData } from '$lib/server/cycles/chart';

const querySchema = z.object({
	channels: z.string().max(4000).optional(),
	from: z.coerce.number().finite().optional(),
	to: z.coerce.number().finite().optional(),
	maxPoints: z.coerce.number().int().min(2).max(MAX_POINTS).default(DEFAULT_MAX_POINTS)
});

/**
 * GET /api/runs/<id>/series?channels=a,b&from=&to=&maxPoints= → { from, to, samples, t, channels }:
 * min/max per bucket of the window, times in s from the log start, values in °C and Pa.
 */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'cycle.read');
	const q = querySchema.safeParse(Object.fromEntries(event.url.searchParams));
	if (!q.success) error(400, { message: 'The series query is not valid.', issues: q.error.issues.map((i) => ({ path: i.path.join('.'), message: i.message })) });
	const { channels, from, to, maxPoints } = q.data;
	if (from !== undefined && to !== undefined && !(to > from)) error(400, { message: '"to" must be after "from".' });
	const wanted = channels ? channels.split(',').map((c) => c.trim()).filter(Boolean) : null;
	try {
		const data = await serveChartData(database.db, event.params.id, { channels: wanted, from: from ?? null, to: to ?? null, maxPoints });
		if (!data) error(404, { message: 'No such run.' });
		return json(data);
	} catch (e) {
		if (e instanceof ChartRequestError) error(400, { message: e.message });
		throw e;
	}
};
