import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { database } from '$lib/server/db';
import { isLeakTestError, listLeakTests, recordRunLeakTest } from '$lib/server/cycles/leak';
import { describeRunError, readJsonBody } from '$lib/server/cycles/upload';

const bodySchema = z.object({ fromS: z.number(), toS: z.number() });

/** GET /api/runs/<id>/leak-tests → { leakTests } evaluated on this run. */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'cycle.read');
	return json({ leakTests: await listLeakTests(database.db, { runId: event.params.id }) });
};

/** POST /api/runs/<id>/leak-tests { fromS, toS } → the recorded pressure-rise test (fit of the manometer). */
export const POST: RequestHandler = async (event) => {
	const user = requirePermission(event, 'cycle.upload');
	try {
		const body = bodySchema.safeParse(await readJsonBody(event.request));
		if (!body.success) return json({ message: 'Send { fromS, toS } in seconds from the log start.' }, { status: 400 });
		const test = await recordRunLeakTest(database.db, { id: user.id, name: user.name }, event.params.id, body.data);
		return json(test, { status: 201 });
	} catch (e) {
		if (isLeakTestError(e)) return json({ message: e.message, code: e.code }, { status: e.status });
		const refusal = describeRunError(e);
		if (refusal) return json(refusal.body, { status: refusal.status });
		throw e;
	}
};
