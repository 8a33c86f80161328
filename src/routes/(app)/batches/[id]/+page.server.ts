import { error } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { buildBatchView, loadBatchRecords } from '$lib/server/batches/query';
import { getPreferences } from '$lib/server/batches/preferences';
import { getConfig } from '$lib/server/config';

export const load = (async (event) => {
	const user = requirePermission(event, 'batch.read');
	const records = await loadBatchRecords(database.db, event.params.id);
	if (!records) error(404, { message: 'There is no such batch.' });
	return { batch: await buildBatchView(database.db, records), preferences: await getPreferences(database.db, user.id), timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE };
}) satisfies PageServerLoad;
