import type { PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { hasPermission } from '$lib/domain/permissions';
import { listRuns } from '$lib/server/cycles/runs';

export const load = (async (event) => {
	const user = requirePermission(event, 'cycle.read');
	return { runs: await listRuns(database.db), canUpload: hasPermission(user.roles, 'cycle.upload') };
}) satisfies PageServerLoad;
