import type { Handle, RequestEvent } from '@sveltejs/kit';
import { database } from '../db';
import { clearSessionCookie, readSessionCookie, validateSessionToken, type SessionEnd } from './session';
import { authenticateApiToken, readBearerToken } from './token';

// Why this request's cookie gave no session, for the sign-in page's message. Keyed by the request
// object, so nothing outlives the request (Kit docs, "State management").
const endedSessions = new WeakMap<Request, SessionEnd>();

export function sessionEndOf(event: RequestEvent): SessionEnd | undefined {
	return endedSessions.get(event.request);
}

/**
 * Sets event.locals.user and event.locals.session on every request (null when signed out).
 * API routes also accept `Authorization: Bearer <token>` of a service account; such a request
 * has a user but no session, so it can never sign (21 CFR 11.200: signatures need a person).
 */
export const authenticate: Handle = async ({ event, resolve }) => {
	event.locals.user = null;
	event.locals.session = null;
	const db = database.db;
	const bearer = event.url.pathname.startsWith('/api/') ? readBearerToken(event.request.headers.get('authorization')) : null;
	if (bearer) {
		event.locals.user = await authenticateApiToken(db, bearer);
		return resolve(event);
	}
	const token = readSessionCookie(event.cookies, event.url);
	if (token) {
		const result = await validateSessionToken(db, token);
		if ('end' in result) {
			endedSessions.set(event.request, result.end);
			clearSessionCookie(event.cookies, event.url);
		} else {
			event.locals.user = result.user;
			event.locals.session = result.session;
		}
	}
	return resolve(event);
};
