import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requireSession } from '$lib/server/auth/guard';
import { beginAssertion, relyingParty } from '$lib/server/auth/passkey';
import { authErrorResponse } from '$lib/server/auth/api';
import { AuthError } from '$lib/server/auth/errors';

/**
 * Assertion options to sign with a passkey: only the signer's own passkeys, bound to this session
 * (a challenge from another session or purpose is refused). Only for a later signing in the
 * session: the first needs username and password (21 CFR 11.200(a)(1)(i)).
 */
export const POST: RequestHandler = async (event) => {
	const { user, session } = requireSession(event, 'profile.manage');
	try {
		if (!session.firstSignedAt) throw new AuthError('passkey-not-allowed', 'The first signature of a session needs your username and password.');
		return json(await beginAssertion(database.db, 'sign', { userId: user.id, sessionId: session.id }, relyingParty(event.url)));
	} catch (err) {
		return authErrorResponse(err);
	}
};
