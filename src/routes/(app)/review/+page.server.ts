import type { PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { listReviewQueue } from '$lib/server/review';
import { getPreferences } from '$lib/server/batches/preferences';
import { getConfig } from '$lib/server/config';

export const load = (async (event) => {
	const user = requirePermission(event, 'review.perform');
	return { queue: await listReviewQueue(database.db), preferences: await getPreferences(database.db, user.id), timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE };
}) satisfies PageServerLoad;
