import type { LayoutServerLoad } from './$types';
import { database } from '$lib/server/db';
import { getSiteInfo } from '$lib/server/site/settings';
import { appVersion } from '$lib/server/version';
import { permissionsOf } from '$lib/domain/permissions';

export const load = (async ({ locals }) => {
	const user = locals.user;
	return {
		locale: locals.locale,
		version: appVersion,
		site: await getSiteInfo(database.db),
		// Only what the shell shows: never hashes, tokens or whole rows.
		user: user ? { username: user.username, name: user.name, roles: user.roles } : null,
		permissions: user ? permissionsOf(user.roles) : []
	};
}) satisfies LayoutServerLoad;
