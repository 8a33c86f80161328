import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { relyingParty } from '$lib/server/auth/passkey';
import { clientAddress } from '$lib/server/auth/request';
import { transitionDeviation } from '$lib/server/deviations';
import { deviationJsonError, invalidBody, readDeviationJson, transitionBodySchema } from '$lib/server/deviations/http';

/**
 * One signed step of the lifecycle (start-investigation, submit, send-back, close, cancel). The
 * route lets anyone who may take part past (deviation.raise); the service checks the step's own
 * permission (close, send-back and cancel are QA's, deviation.approve). Signing needs a browser
 * session: API tokens never sign (ceremony.ts).
 */
export const POST: RequestHandler = async (event) => {
	const user = requirePermission(event, 'deviation.raise');
	try {
		const parsed = transitionBodySchema.safeParse(await readDeviationJson(event.request));
		if (!parsed.success) return invalidBody(parsed.error);
		const b = parsed.data;
		const result = await transitionDeviation(database.db, {
			id: event.params.id,
			action: b.action,
			expectedVersion: b.version,
			reason: b.reason,
			closureComment: b.closureComment,
			user,
			session: event.locals.session,
			credentials: { method: 'password', username: b.signature.username, password: b.signature.password },
			address: clientAddress(event),
			relyingParty: relyingParty(event.url)
		});
		return json(result, { status: 201 });
	} catch (err) {
		return deviationJsonError(err);
	}
};
