import type { Database } from '$lib/server/db/client';
import { createUserSession, validateSessionToken } from '$lib/server/auth/session';
import type { SessionInfo, SessionUser } from '$lib/server/auth/types';
import { AuthError } from '$lib/server/auth/errors';
import { MasterError } from '$lib/server/masters/errors';
import { DEMO_PASSWORD, sessionUser } from '../auth/support/identity';

export { DEMO_PASSWORD, seededDatabase, auditHead, auditSince } from '../auth/support/identity';

/** A person signed in to a browser session, as the signing ceremony needs. */
export interface Person {
	user: SessionUser;
	session: SessionInfo;
	/** Username and password: valid for the first and every later signature of a session (11.200(a)(1)). */
	credentials(): Promise<{ method: 'password'; username: string; password: string }>;
}

export async function signIn(db: Database, username: string): Promise<Person> {
	const user = await sessionUser(db, username);
	const { token } = await createUserSession(db, user.id, 'password');
	const v = await validateSessionToken(db, token);
	if ('end' in v) throw new Error('session did not validate');
	return { user, session: v.session, credentials: async () => ({ method: 'password', username, password: DEMO_PASSWORD }) };
}

/** "ok", or the refusal as "<status> <code>" (MasterError or the ceremony's AuthError). */
export async function outcomeOf(p: Promise<unknown>): Promise<string> {
	try {
		await p;
		return 'ok';
	} catch (err) {
		if (err instanceof MasterError || err instanceof AuthError) return `${err.status} ${err.code}`;
		throw err;
	}
}
