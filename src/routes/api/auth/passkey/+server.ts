import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { AuthenticationResponseJSON } from '@simplewebauthn/server';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { relyingParty } from '$lib/server/auth/passkey';
import { hashToken, invalidateSession, setSessionCookie } from '$lib/server/auth/session';
import { startSession, verifyPasskeySignIn } from '$lib/server/auth/signin';
import { safeRedirectPath } from '$lib/server/auth/redirect';
import { clientAddress } from '$lib/server/auth/request';
import { AuthError } from '$lib/server/auth/errors';
import { PASSWORD_CHANGE_PATH } from '$lib/server/auth/guard';
import { authErrorResponse, PASSKEY_NONCE_COOKIE, readJson } from '$lib/server/auth/api';

const body = z.object({ response: z.looseObject({ id: z.string(), response: z.looseObject({ clientDataJSON: z.string() }) }), redirectTo: z.string().optional() });

/** Public (this is the sign-in): verifies a passkey assertion and opens a session. */
export const POST: RequestHandler = async (event) => {
	const { cookies, url, locals } = event;
	try {
		const input = await readJson(event.request, body);
		const nonce = cookies.get(PASSKEY_NONCE_COOKIE);
		if (!nonce) throw new AuthError('challenge', 'The passkey request expired. Try again.');
		cookies.delete(PASSKEY_NONCE_COOKIE, { path: '/api/auth/passkey' });
		const db = database.db;
		const address = clientAddress(event);
		const account = await verifyPasskeySignIn(db, { response: input.response as unknown as AuthenticationResponseJSON, nonceHash: hashToken(nonce), address }, relyingParty(url));
		if (locals.session) await invalidateSession(db, locals.session.id);
		const { token } = await startSession(db, account, 'passkey', address);
		setSessionCookie(cookies, url, token);
		const redirectTo = safeRedirectPath(input.redirectTo);
		return json({ redirectTo: account.mustChangePassword ? `${PASSWORD_CHANGE_PATH}?redirectTo=${encodeURIComponent(redirectTo)}` : redirectTo });
	} catch (err) {
		return authErrorResponse(err);
	}
};
