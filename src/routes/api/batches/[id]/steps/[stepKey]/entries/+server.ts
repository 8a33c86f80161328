import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { relyingParty } from '$lib/server/auth/passkey';
import { recordStepEntry } from '$lib/server/batches/entries';
import { credentialsFrom, entryBodySchema, invalidBody, refusal } from '$lib/server/batches/http';
import { ENTRY_BODY_MAX_BYTES, readCappedJson } from '$lib/server/batches/body';
import { clientAddress } from '$lib/server/auth/request';

/**
 * Records a step (or a correction, with `reasonCode` and `version`), signed "performed": the
 * same validation, permissions and ceremony as the step page. 201 with the entry and the new
 * batch version; 400/403/409/423 with `{ message, code, issues }` (409 also with `state`).
 */
export const POST: RequestHandler = async (event) => {
	const user = requirePermission(event, 'batch.execute');
	try {
		// The body is capped before it is parsed (no unbounded buffering).
		const parsed = entryBodySchema.safeParse(await readCappedJson(event.request, ENTRY_BODY_MAX_BYTES));
		if (!parsed.success) return invalidBody(parsed.error);
		const body = parsed.data;
		const result = await recordStepEntry(database.db, {
			user,
			session: event.locals.session,
			address: clientAddress(event),
			relyingParty: relyingParty(event.url),
			batchId: event.params.id,
			stepKey: event.params.stepKey,
			values: body.values,
			comment: body.comment,
			reasonCode: body.reasonCode,
			workedAt: body.workedAt,
			expectedVersion: body.version,
			credentials: credentialsFrom(body.signature)
		});
		return json(result, { status: 201 });
	} catch (err) {
		return refusal(database.db, err, event.params.id);
	}
};
