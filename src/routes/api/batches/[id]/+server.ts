import { error, json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { buildBatchView, loadBatchRecords } from '$lib/server/batches/query';
import { batchVersion } from '$lib/server/batches/state';

/**
 * The whole executed record: status, steps with fields, entries, signatures and flags,
 * deviations. `?since=<version>` answers `{ version, unchanged: true }` while nothing changed,
 * so a page can poll cheaply and a supervisor sees an operator's progress without reloading.
 */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'batch.read');
	const since = Number(event.url.searchParams.get('since'));
	if (Number.isInteger(since) && since > 0) {
		const version = await batchVersion(database.db, event.params.id);
		if (version === null) error(404, { message: 'There is no such batch.' });
		if (version === since) return json({ version, unchanged: true });
	}
	const records = await loadBatchRecords(database.db, event.params.id);
	if (!records) error(404, { message: 'There is no such batch.' });
	return json(await buildBatchView(database.db, records));
};
