import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { relyingParty } from '$lib/server/auth/passkey';
import { clientAddress } from '$lib/server/auth/request';
import { disposeBatch } from '$lib/server/review';
import { dispositionBodySchema, REVIEW_BODY_MAX_BYTES, reviewRefusal } from '$lib/server/review/http';
import { credentialsFrom, invalidBody } from '$lib/server/batches/http';
import { readCappedJson } from '$lib/server/batches/body';

/**
 * Releases or rejects the batch, signed `released` / `rejected` by QA (21 CFR 211.192, 11.50;
 * Annex 11, 15). Refused with every open gate (409, or 403 for who signs) and nothing written.
 * API tokens have no browser session and can never sign.
 */
export const POST: RequestHandler = async (event) => {
	const user = requirePermission(event, 'batch.release');
	try {
		const parsed = dispositionBodySchema.safeParse(await readCappedJson(event.request, REVIEW_BODY_MAX_BYTES));
		if (!parsed.success) return invalidBody(parsed.error);
		const result = await disposeBatch(database.db, {
			user,
			session: event.locals.session,
			address: clientAddress(event),
			relyingParty: relyingParty(event.url),
			batchId: event.params.id,
			decision: parsed.data.decision,
			comment: parsed.data.comment,
			expectedVersion: parsed.data.version,
			credentials: credentialsFrom(parsed.data.signature)
		});
		return json({ ...result, checkpoint: result.checkpoint ? { size: result.checkpoint.size, root: result.checkpoint.root, at: result.checkpoint.at, keyId: result.checkpoint.keyId } : null }, { status: 201 });
	} catch (err) {
		return reviewRefusal(err);
	}
};
