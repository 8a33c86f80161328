import { error, json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { getAccount } from '$lib/server/users/query';

export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'user.read');
	const account = await getAccount(database.db, event.params.id);
	if (!account) error(404, { message: 'No such account.' });
	return json(account);
};
