import { redirect } from '@sveltejs/kit';
import { fail, message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import type { Actions, PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { getConfig } from '$lib/server/config';
import { getSiteInfo } from '$lib/server/site/settings';
import { signInSchema } from '$lib/server/auth/schemas';
import { safeRedirectPath } from '$lib/server/auth/redirect';
import { startSession, verifyPasswordSignIn } from '$lib/server/auth/signin';
import { invalidateSession, setSessionCookie } from '$lib/server/auth/session';
import { isAuthError, type AuthErrorCode } from '$lib/server/auth/errors';
import { clientAddress } from '$lib/server/auth/request';
import { PASSWORD_CHANGE_PATH } from '$lib/server/auth/guard';

const DEFAULT_DEMO_PASSWORD = 'frost-demo-2026';

// Public by design: the sign-in page (listed as a public exception in the role × route test).
export const load = (async ({ locals, url }) => {
	const redirectTo = safeRedirectPath(url.searchParams.get('redirectTo'));
	if (locals.user && locals.session) redirect(303, redirectTo);
	const config = getConfig();
	const site = await getSiteInfo(database.db);
	const ended = url.searchParams.get('ended');
	return {
		form: await superValidate(zod4(signInSchema)),
		redirectTo,
		ended: ended === 'idle' || ended === 'absolute' ? ended : null,
		idleMinutes: config.RIMEBOOK_SESSION_IDLE_MINUTES,
		absoluteHours: Math.round(config.RIMEBOOK_SESSION_ABSOLUTE_MINUTES / 60),
		// The documented demo password is shown on a demo site only, and never a site's own choice.
		demoPassword: site.demo && config.RIMEBOOK_DEMO_PASSWORD === DEFAULT_DEMO_PASSWORD ? DEFAULT_DEMO_PASSWORD : null
	};
}) satisfies PageServerLoad;

export const actions = {
	/** Plain POST /login with `username` and `password`: 303 with the session cookie on success. */
	default: async (event) => {
		const form = await superValidate(event.request, zod4(signInSchema));
		const { password } = form.data;
		// Never send the password back to the page.
		form.data.password = '';
		if (!form.valid) return fail(400, { form });
		const db = database.db;
		const address = clientAddress(event);
		let account;
		try {
			account = await verifyPasswordSignIn(db, { username: form.data.username, password, address });
		} catch (err) {
			if (isAuthError(err)) return message(form, err.code satisfies AuthErrorCode, { status: err.status });
			throw err;
		}
		// A new session at every sign-in; the one this browser had (if any) ends (ASVS V7.2.4).
		if (event.locals.session) await invalidateSession(db, event.locals.session.id);
		const { token } = await startSession(db, account, 'password', address);
		setSessionCookie(event.cookies, event.url, token);
		const redirectTo = safeRedirectPath(event.url.searchParams.get('redirectTo'));
		if (account.mustChangePassword) redirect(303, `${PASSWORD_CHANGE_PATH}?redirectTo=${encodeURIComponent(redirectTo)}`);
		redirect(303, redirectTo);
	}
} satisfies Actions;
