import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { beginAssertion, relyingParty } from '$lib/server/auth/passkey';
import { generateToken, hashToken, isSecureContext } from '$lib/server/auth/session';
import { authErrorResponse, PASSKEY_NONCE_COOKIE } from '$lib/server/auth/api';
import { admitChallengeRequest } from '$lib/server/auth/lockout';
import { clientAddress } from '$lib/server/auth/request';

/**
 * Public (before sign-in): options for a passkey sign-in. The challenge is bound to a random
 * nonce in a short-lived httpOnly cookie, so only this browser can answer it. Each one stores a
 * row, so an address is held to the per-address limit first (429; finding 28).
 */
export const POST: RequestHandler = async (event) => {
	const { cookies, url } = event;
	const nonce = generateToken();
	try {
		await admitChallengeRequest(database.db, clientAddress(event));
		const options = await beginAssertion(database.db, 'sign-in', { sessionId: hashToken(nonce) }, relyingParty(url));
		cookies.set(PASSKEY_NONCE_COOKIE, nonce, { path: '/api/auth/passkey', httpOnly: true, sameSite: 'strict', secure: isSecureContext(url), maxAge: 300 });
		return json(options);
	} catch (err) {
		return authErrorResponse(err);
	}
};
