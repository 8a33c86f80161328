import { error, json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { database } from '$lib/server/db';
import { getConsistencyProof, ProofError } from '$lib/server/audit/proof';

/** GET /api/audit/consistency?from=&to= → RFC 9162 consistency proof that checkpoint `to` extends checkpoint `from`. */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'audit.read');
	const from = Number(event.url.searchParams.get('from'));
	const to = Number(event.url.searchParams.get('to'));
	if (!Number.isSafeInteger(from) || !Number.isSafeInteger(to) || from < 1 || to < 1) error(400, { message: 'from and to must be checkpoint sizes.' });
	try {
		return json(await getConsistencyProof(database.db, from, to));
	} catch (err) {
		if (err instanceof ProofError) error(err.status, { message: err.message });
		throw err;
	}
};
