import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import { hasPermission, type Permission } from '$lib/domain/permissions';
import type { SessionUser } from './types';

/**
 * The one guard every protected load, form action and endpoint calls (Kit docs, "Loading data:
 * implications for authentication"; 21 CFR 11.10(d), (g)). Pages redirect a signed-out user to
 * /login and come back afterwards; API routes answer 401; a missing permission is 403.
 */
export function requirePermission(event: RequestEvent, permission: Permission): SessionUser {
	const user = requireUser(event);
	const granted = user.tokenPermissions
		? user.tokenPermissions.includes(permission) && hasPermission(user.roles, permission)
		: hasPermission(user.roles, permission);
	if (!granted) error(403, { message: 'Your roles do not allow this.' });
	return user;
}

/** Any signed-in user. */
export function requireUser(event: RequestEvent): SessionUser {
	const user = event.locals.user;
	if (!user) {
		if (isApiRequest(event)) error(401, { message: 'Sign in first.' });
		const back = event.url.pathname + event.url.search;
		redirect(303, `/login?redirectTo=${encodeURIComponent(back)}`);
	}
	return user;
}

export function isApiRequest(event: RequestEvent): boolean {
	return event.url.pathname.startsWith('/api/');
}
