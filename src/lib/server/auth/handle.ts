import type { Handle } from '@sveltejs/kit';

/**
 * Sets event.locals.user and event.locals.session on every request (null when signed out).
 * Sessions arrive with the identity work; until then every request is signed out.
 */
export const authenticate: Handle = ({ event, resolve }) => {
	event.locals.user = null;
	event.locals.session = null;
	return resolve(event);
};
