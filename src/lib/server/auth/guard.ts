import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import { hasPermission, type Permission } from '$lib/domain/permissions';
import { sessionEndOf } from './handle';
import type { SessionInfo, SessionUser } from './types';

/** Where a person must go before anything else when their password must change. */
export const PASSWORD_CHANGE_PATH = '/password';

export interface GuardOptions {
	/** The password-change page, sign-out and /api/me stay open while a password change is due. */
	allowPendingPasswordChange?: boolean;
}

/**
 * The one guard every protected load, form action and endpoint calls (Kit docs, "Loading data:
 * implications for authentication"; 21 CFR 11.10(d), (g); ASVS V8.2.1, V8.3.1). Pages redirect a
 * signed-out user to /login and come back afterwards; API routes answer 401; a missing
 * permission is 403. API tokens are held to the permissions they were granted.
 */
export function requirePermission(event: RequestEvent, permission: Permission, options?: GuardOptions): SessionUser {
	const user = requireUser(event, options);
	const granted = user.tokenPermissions
		? user.tokenPermissions.includes(permission) && hasPermission(user.roles, permission)
		: hasPermission(user.roles, permission);
	if (!granted) error(403, { message: 'Your roles do not allow this.' });
	return user;
}

/** Any signed-in user (or, on API routes, service account). */
export function requireUser(event: RequestEvent, options: GuardOptions = {}): SessionUser {
	const user = event.locals.user;
	if (!user) {
		if (isApiRequest(event)) error(401, { message: 'Sign in first.' });
		redirect(303, signInPath(event));
	}
	if (user.mustChangePassword && !options.allowPendingPasswordChange) {
		if (isApiRequest(event)) error(403, { message: 'Change your password first.' });
		redirect(303, `${PASSWORD_CHANGE_PATH}?redirectTo=${encodeURIComponent(returnPath(event))}`);
	}
	return user;
}

/** A person in a browser session: signing, passkeys and password changes need one, never a token. */
export function requireSession(event: RequestEvent, permission: Permission, options?: GuardOptions): { user: SessionUser; session: SessionInfo } {
	const user = requirePermission(event, permission, options);
	const session = event.locals.session;
	if (!session || user.kind !== 'person') error(403, { message: 'This needs a person signed in, not an API token.' });
	return { user, session };
}

export function isApiRequest(event: RequestEvent): boolean {
	return event.url.pathname.startsWith('/api/');
}

/** /login?redirectTo=<this page>, and why the last session ended if it did. */
function signInPath(event: RequestEvent): string {
	const params = new URLSearchParams({ redirectTo: returnPath(event) });
	const ended = sessionEndOf(event);
	if (ended === 'idle' || ended === 'absolute') params.set('ended', ended);
	return `/login?${params}`;
}

/** The page to come back to: a form action's `?/name` query is dropped, the page stays. */
function returnPath(event: RequestEvent): string {
	const search = new URLSearchParams(event.url.search);
	for (const key of [...search.keys()]) if (key.startsWith('/')) search.delete(key);
	const query = search.toString();
	return event.url.pathname + (query ? `?${query}` : '');
}
