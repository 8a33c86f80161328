import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { blobStore } from '$lib/server/blobs';
import { baseType } from '$lib/server/blobs/policy';
import { uploadAttachment, uploadLimit } from '$lib/server/batches/attachments';
import { ExecutionError } from '$lib/server/batches/errors';
import { refusal } from '$lib/server/batches/http';

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
		const declared = Number(event.request.headers.get('content-length') ?? '0');
		if (declared > maxBytes) throw new ExecutionError('file-too-large', `The file is larger than the ${maxBytes / 1048576} MB allowed here.`);
		const bytes = await readCapped(event.request, maxBytes);
		const result = await uploadAttachment(database.db, blobStore(), {
			user,
			batchId: event.params.id,
			stepKey,
			fieldKey,
			filename: decodeURIComponent(event.request.headers.get('x-filename') ?? 'file'),
			contentType: baseType(event.request.headers.get('content-type')),
			bytes
		});
		return json(result, { status: 201 });
	} catch (err) {
		return refusal(database.db, err);
	}
};

/** Reads the body but stops as soon as it passes the limit (no unbounded buffering). */
async function readCapped(request: Request, maxBytes: number): Promise<Uint8Array> {
	const reader = request.body?.getReader();
	if (!reader) return new Uint8Array();
	const chunks: Uint8Array[] = [];
	let size = 0;
	for (;;) {
		const { done, value } = await reader.read();
		if (done) break;
		size += value.byteLength;
		if (size > maxBytes) {
			await reader.cancel();
			throw new ExecutionError('file-too-large', `The file is larger than the ${maxBytes / 1048576} MB allowed here.`);
		}
		chunks.push(value);
	}
	const out = new Uint8Array(size);
	let at = 0;
	for (const c of chunks) {
		out.set(c, at);
		at += c.byteLength;
	}
	return out;
}
