import { error, json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { database } from '$lib/server/db';
import { getRun } from '$lib/server/cycles/runs';
import { LeakTestError, listLeakTests, recordLeakTest } from '$lib/server/cycles/leak';
import { runUnitOfWork } from '$lib/server/work';

const bodySchema = z.object({ fromS: z.number(), toS: z.number() });

/** GET /api/runs/<id>/leak-tests → { leakTests } evaluated on this run. */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'cycle.read');
	return json({ leakTests: await listLeakTests(database.db, { runId: event.params.id }) });
};

/** POST /api/runs/<id>/leak-tests { fromS, toS } → the recorded pressure-rise test (fit of the manometer). */
export const POST: RequestHandler = async (event) => {
	const user = requirePermission(event, 'cycle.upload');
	const run = await getRun(database.db, event.params.id);
	if (!run) error(404, { message: 'No such run.' });
	const body = bodySchema.safeParse(await event.request.json().catch(() => null));
	if (!body.success) error(400, { message: 'Send { fromS, toS } in seconds from the log start.' });
	try {
		const test = await runUnitOfWork(database.db, { id: user.id, name: user.name }, (uow) =>
			recordLeakTest(uow, run.equipmentId, { method: 'fit', runId: run.id, ...body.data })
		);
		return json(test, { status: 201 });
	} catch (e) {
		if (e instanceof LeakTestError) return json({ message: e.message }, { status: e.status });
		throw e;
	}
};
