import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { listDeviations, raiseManualDeviation } from '$lib/server/deviations';
import { deviationJsonError, filtersFrom, invalidBody, raiseBodySchema, readDeviationJson } from '$lib/server/deviations/http';

/** The deviation list: ?status, classification, batch, kind, q (text), page. */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'deviation.read');
	const { page, ...filters } = filtersFrom(event.url.searchParams);
	const { items, total } = await listDeviations(database.db, filters);
	return json({ items, total, page });
};

/** Raises a deviation by hand on an open batch (21 CFR 211.100(b)). */
export const POST: RequestHandler = async (event) => {
	const user = requirePermission(event, 'deviation.raise');
	try {
		const parsed = raiseBodySchema.safeParse(await readDeviationJson(event.request));
		if (!parsed.success) return invalidBody(parsed.error);
		const raised = await raiseManualDeviation(database.db, user, parsed.data);
		return json(raised, { status: 201 });
	} catch (err) {
		return deviationJsonError(err);
	}
};
