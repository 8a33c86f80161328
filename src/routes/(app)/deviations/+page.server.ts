import type { PageServerLoad } from './$types';
import { eq } from 'drizzle-orm';
import { database } from '$lib/server/db';
import { batch } from '$lib/server/db/schema';
import { getConfig } from '$lib/server/config';
import { requirePermission } from '$lib/server/auth/guard';
import { hasPermission } from '$lib/domain/permissions';
import { getPreferences } from '$lib/server/batches/preferences';
import { listDeviationKinds, listDeviations } from '$lib/server/deviations';
import { filtersFrom, PAGE_SIZE } from '$lib/server/deviations/http';

export const load = (async (event) => {
	const user = requirePermission(event, 'deviation.read');
	const db = database.db;
	const { page, ...filters } = filtersFrom(event.url.searchParams);
	const { items, total } = await listDeviations(db, filters);
	const [b] = filters.batchId ? await db.select({ number: batch.number }).from(batch).where(eq(batch.id, filters.batchId)) : [];
	return {
		items,
		total,
		page,
		pageSize: PAGE_SIZE,
		filters: { status: filters.status ?? '', classification: filters.classification ?? '', kind: filters.kind ?? '', q: filters.text ?? '', batch: filters.batchId ?? '' },
		batchNumber: b?.number ?? null,
		kinds: await listDeviationKinds(db),
		canRaise: hasPermission(user.roles, 'deviation.raise'),
		preferences: await getPreferences(db, user.id),
		timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE
	};
}) satisfies PageServerLoad;
