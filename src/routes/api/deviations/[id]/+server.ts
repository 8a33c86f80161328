import { error, json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { getDeviation, updateDeviation } from '$lib/server/deviations';
import { deviationJsonError, editBodySchema, invalidBody, readDeviationJson } from '$lib/server/deviations/http';

/** One deviation with its history: audit events and signatures (11.10(e), 11.50). */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'deviation.read');
	const d = await getDeviation(database.db, event.params.id);
	if (!d) error(404, { message: 'No such deviation.' });
	return json(d);
};

/** Edits fields before submission (audited with old and new values, not signed); `version` guards against overwrites. */
export const PATCH: RequestHandler = async (event) => {
	const user = requirePermission(event, 'deviation.raise');
	try {
		const parsed = editBodySchema.safeParse(await readDeviationJson(event.request));
		if (!parsed.success) return invalidBody(parsed.error);
		return json(await updateDeviation(database.db, user, { id: event.params.id, expectedVersion: parsed.data.version, fields: parsed.data.fields }));
	} catch (err) {
		return deviationJsonError(err);
	}
};
