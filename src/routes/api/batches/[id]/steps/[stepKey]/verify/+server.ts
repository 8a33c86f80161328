import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { relyingParty } from '$lib/server/auth/passkey';
import { verifyStep } from '$lib/server/batches/verify';
import { credentialsFrom, invalidBody, refusal, verifyBodySchema } from '$lib/server/batches/http';
import { SMALL_BODY_MAX_BYTES, readCappedJson } from '$lib/server/batches/body';
import { clientAddress } from '$lib/server/auth/request';

/** Verifies a critical step, signed "verified" by a supervisor who did not record it (211.188(b)(11)). */
export const POST: RequestHandler = async (event) => {
	const user = requirePermission(event, 'batch.verify');
	try {
		const parsed = verifyBodySchema.safeParse(await readCappedJson(event.request, SMALL_BODY_MAX_BYTES));
		if (!parsed.success) return invalidBody(parsed.error);
		const result = await verifyStep(database.db, {
			user,
			session: event.locals.session,
			address: clientAddress(event),
			relyingParty: relyingParty(event.url),
			batchId: event.params.id,
			stepKey: event.params.stepKey,
			expectedVersion: parsed.data.version,
			credentials: credentialsFrom(parsed.data.signature)
		});
		return json(result, { status: 201 });
	} catch (err) {
		return refusal(database.db, err, event.params.id);
	}
};
