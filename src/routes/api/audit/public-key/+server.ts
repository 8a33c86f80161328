import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { database } from '$lib/server/db';
import { getPublicSiteKey, listSiteKeys } from '$lib/server/audit/checkpoint';

/**
 * GET /api/audit/public-key → { current: { id, algorithm, publicKey } | null, keys: [...] } (SPKI PEM,
 * Ed25519). Never the private key, and a read never creates a key (finding 16): `current` is null
 * until start-up or the first checkpoint made one.
 */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'audit.read');
	const current = await getPublicSiteKey(database.db);
	return json({ current: current && { id: current.id, algorithm: 'Ed25519', publicKey: current.publicKey }, keys: await listSiteKeys(database.db) });
};
