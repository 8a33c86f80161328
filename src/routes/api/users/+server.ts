import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { listAccounts } from '$lib/server/users/query';

/** Accounts without secrets (user.read: admins and inspectors). */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'user.read');
	return json(await listAccounts(database.db));
};
