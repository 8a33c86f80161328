import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requireUser } from '$lib/server/auth/guard';

/** Who is signed in: `{ username, name, roles }`, or 401 (the guard answers 401 on API routes). */
export const GET: RequestHandler = async (event) => {
	const user = requireUser(event, { allowPendingPasswordChange: true });
	return json({ username: user.username, name: user.name, roles: user.roles });
};
