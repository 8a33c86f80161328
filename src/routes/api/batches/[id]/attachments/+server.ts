import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { blobStore } from '$lib/server/blobs';
import { baseType } from '$lib/server/blobs/policy';
import { uploadAttachment, uploadLimit } from '$lib/server/batches/attachments';
import { ExecutionError } from '$lib/server/batches/errors';
import { refusal } from '$lib/server/batches/http';
import { readCapped } from '$lib/server/batches/body';

/**
 * Uploads a file to a step: the raw bytes as the body, `content-type` its type, `x-step-key`,
 * optional `x-field-key` and `x-filename` (URI-encoded). Too large: 413; refused type: 415.
 * adapter-node's BODY_SIZE_LIMIT caps every body before this (npm start sets 128M).
 */
export const POST: RequestHandler = async (event) => {
	const user = requirePermission(event, 'batch.execute');
	const stepKey = event.request.headers.get('x-step-key') ?? '';
	const fieldKey = event.request.headers.get('x-field-key') || null;
	try {
		const { maxBytes } = await uploadLimit(database.db, event.params.id, stepKey, fieldKey);
		const filename = readFilename(event.request.headers.get('x-filename'));
		const bytes = await readCapped(event.request, maxBytes, 'file');
		const result = await uploadAttachment(database.db, blobStore(), {
			user,
			batchId: event.params.id,
			stepKey,
			fieldKey,
			filename,
			contentType: baseType(event.request.headers.get('content-type')),
			bytes
		});
		return json(result, { status: 201 });
	} catch (err) {
		return refusal(database.db, err);
	}
};

/** The URI-encoded x-filename header; a malformed escape is the client's mistake (400), not a crash. */
function readFilename(header: string | null): string {
	if (header === null) return 'file';
	if (header.length > 2000) throw new ExecutionError('invalid-input', 'The x-filename header is too long.');
	try {
		return decodeURIComponent(header);
	} catch {
		throw new ExecutionError('invalid-input', 'The x-filename header is not URI-encoded text.');
	}
}
