import type { PageServerLoad } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { database } from '$lib/server/db';
import { getTodayOverview } from '$lib/server/today/overview';
import { getConfig } from '$lib/server/config';
import { dateInZone } from '$lib/domain/time';

export const load = (async (event) => {
	const user = requirePermission(event, 'today.view');
	const today = dateInZone(new Date(), getConfig().RIMEBOOK_SITE_TIMEZONE);
	return { today, overview: await getTodayOverview(database.db, user.roles, today) };
}) satisfies PageServerLoad;
