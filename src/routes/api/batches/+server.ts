import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { relyingParty } from '$lib/server/auth/passkey';
import { listBatches } from '$lib/server/batches/query';
import { apiSignatureSchema, credentialsFrom, invalidBody, refusal } from '$lib/server/batches/http';
import { issueBatch } from '$lib/server/masters/issue';
import { SMALL_BODY_MAX_BYTES, readCappedJson } from '$lib/server/batches/body';
import { clientAddress } from '$lib/server/auth/request';

/** Every batch with its product, status and progress (batch.read). */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'batch.read');
	const batches = await listBatches(database.db);
	return json(batches.map((b) => ({ id: b.id, number: b.number, product: b.product, productCode: b.productCode, status: b.status, version: b.version, issuedAt: b.issuedAt, progress: b.progress, openDeviations: b.openDeviations })));
};

const issueSchema = z.strictObject({
	masterRecordId: z.string().min(1).max(100),
	batchNumber: z.string().max(40).optional(),
	batchSize: z.number().positive(),
	signature: apiSignatureSchema
});

/** Issues a batch record from an effective master (QA, signed "issued"; the masters area's issueBatch). */
export const POST: RequestHandler = async (event) => {
	const user = requirePermission(event, 'batch.issue');
	try {
		const parsed = issueSchema.safeParse(await readCappedJson(event.request, SMALL_BODY_MAX_BYTES));
		if (!parsed.success) return invalidBody(parsed.error);
		const issued = await issueBatch(database.db, {
			user,
			session: event.locals.session,
			masterRecordId: parsed.data.masterRecordId,
			batchNumber: parsed.data.batchNumber,
			batchSize: parsed.data.batchSize,
			credentials: credentialsFrom(parsed.data.signature),
			address: clientAddress(event),
			relyingParty: relyingParty(event.url)
		});
		return json(issued, { status: 201 });
	} catch (err) {
		return refusal(database.db, err);
	}
};
