import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { analyseUpload } from '$lib/server/cycles/runs';
import { describeRunError, MAX_READER_LOG_BYTES, readUploadForm } from '$lib/server/cycles/upload';
import { hasPermission } from '$lib/domain/permissions';
import { MAX_LOG_BYTES } from '$lib/domain/lyo/mapping';

/**
 * POST /api/cycles/analyse, multipart: file, mapping (JSON), optional recipe (JSON) → the
 * analysis, storing nothing. Without a recipe, whatever needs none is still reported. Logs up to
 * MAX_READER_LOG_BYTES for cycle.read, MAX_LOG_BYTES for cycle.upload.
 */
export const POST: RequestHandler = async (event) => {
	const user = requirePermission(event, 'cycle.read');
	// Readers preview short logs; the full MAX_LOG_BYTES needs cycle.upload (REVIEW finding 8).
	const cap = hasPermission(user.roles, 'cycle.upload') ? MAX_LOG_BYTES : MAX_READER_LOG_BYTES;
	try {
		const form = await readUploadForm(event.request, cap);
		if (form.batchId || form.stepKey) return json({ message: 'Analysing without storing takes no batch or step; upload the run to the lyophilizer instead.' }, { status: 400 });
		return json(analyseUpload(form.upload, form.recipe));
	} catch (e) {
		const refusal = describeRunError(e);
		if (refusal) return json(refusal.body, { status: refusal.status });
		throw e;
	}
};
