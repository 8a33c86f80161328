import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { analyseUpload } from '$lib/server/cycles/runs';
import { describeRunError, readUploadForm } from '$lib/server/cycles/upload';

/**
 * POST /api/cycles/analyse, multipart: file, mapping (JSON), optional recipe (JSON) → the
 * analysis, storing nothing. Without a recipe, whatever needs none is still reported.
 */
export const POST: RequestHandler = async (event) => {
	requirePermission(event, 'cycle.read');
	try {
		const form = await readUploadForm(event.request);
		if (form.batchId || form.stepKey) return json({ message: 'Analysing without storing takes no batch or step; upload the run to the lyophilizer instead.' }, { status: 400 });
		return json(analyseUpload(form.upload, form.recipe));
	} catch (e) {
		const refusal = describeRunError(e);
		if (refusal) return json(refusal.body, { status: refusal.status });
		throw e;
	}
};
