import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { database } from '$lib/server/db';
import { getSigningKey, listSiteKeys } from '$lib/server/audit/checkpoint';

/** GET /api/audit/public-key → { current: { id, publicKey }, keys: [...] } (SPKI PEM, Ed25519). Never the private key. */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'audit.read');
	const current = await getSigningKey(database.db);
	return json({ current: { id: current.id, algorithm: 'Ed25519', publicKey: current.publicKey }, keys: await listSiteKeys(database.db) });
};
