import type { PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { hasPermission } from '$lib/domain/permissions';
import { listAccounts } from '$lib/server/users/query';
import { getConfig } from '$lib/server/config';

/** Admins manage accounts; inspectors read them (design.md: inspectors read everything). */
export const load = (async (event) => {
	const user = requirePermission(event, 'user.read');
	return {
		accounts: await listAccounts(database.db),
		canManage: hasPermission(user.roles, 'user.manage'),
		timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE
	};
}) satisfies PageServerLoad;
