import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { database } from '$lib/server/db';
import { importRun, listRuns } from '$lib/server/cycles/runs';
import { describeRunError, readUploadForm } from '$lib/server/cycles/upload';

/** GET /api/equipment/<id>/runs → { runs } (newest first). */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'cycle.read');
	return json({ runs: await listRuns(database.db, { equipmentId: event.params.id }) });
};

/**
 * POST /api/equipment/<id>/runs, multipart: file, mapping (JSON), optional batch and step, or
 * recipe (JSON) → 201 { runId, analysis }. A session or an API token with cycle.upload.
 * A bad file: { message, line } with 422 and nothing stored.
 */
export const POST: RequestHandler = async (event) => {
	const user = requirePermission(event, 'cycle.upload');
	try {
		const form = await readUploadForm(event.request);
		const result = await importRun(
			database.db,
			{ id: user.id, name: user.name },
			{ equipmentId: event.params.id, recipe: form.recipe, batchId: form.batchId, stepKey: form.stepKey },
			form.upload
		);
		return json(result, { status: 201 });
	} catch (e) {
		const refusal = describeRunError(e);
		if (refusal) return json(refusal.body, { status: refusal.status });
		throw e;
	}
};
