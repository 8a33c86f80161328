import { error, json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { database } from '$lib/server/db';
import { getInclusionProof, ProofError } from '$lib/server/audit/proof';

/** GET /api/audit/proof/<seq>[?size=] → RFC 9162 inclusion proof of that event in the latest (or given) checkpoint. */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'audit.read');
	const seq = Number(event.params.seq);
	const sizeParam = event.url.searchParams.get('size');
	const size = sizeParam === null ? undefined : Number(sizeParam);
	if (!Number.isSafeInteger(seq) || seq < 1 || (size !== undefined && (!Number.isSafeInteger(size) || size < 1))) error(400, { message: 'seq and size must be positive whole numbers.' });
	try {
		return json(await getInclusionProof(database.db, seq, size));
	} catch (err) {
		if (err instanceof ProofError) error(err.status, { message: err.message });
		throw err;
	}
};
