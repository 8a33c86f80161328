import { redirect } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { clearSessionCookie } from '$lib/server/auth/session';
import { endSession } from '$lib/server/auth/signin';

/**
 * Sign-out ends the session on the server, not only the cookie (ASVS V7.4.1). Public: signing out
 * with no session is harmless and just lands on /login. POST only, so a link or image cannot sign
 * anyone out; SvelteKit's origin check refuses a cross-site form POST.
 */
export const POST: RequestHandler = async ({ locals, cookies, url }) => {
	if (locals.session && locals.user) await endSession(database.db, locals.user, locals.session.id);
	clearSessionCookie(cookies, url);
	locals.user = null;
	locals.session = null;
	redirect(303, '/login');
};
