import type { PageServerLoad } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { hasPermission } from '$lib/domain/permissions';
import { getConfig } from '$lib/server/config';
import { database } from '$lib/server/db';

// The events themselves are fetched by the page from GET /api/audit (cursor paging).
export const load = (async (event) => {
	const user = requirePermission(event, 'audit.read');
	return { timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE, canExport: hasPermission(user.roles, 'audit.export') };
}) satisfies PageServerLoad;
