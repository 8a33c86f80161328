import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { blobStore } from '$lib/server/blobs';
import { downloadAttachment } from '$lib/server/batches/attachments';
import { refusal } from '$lib/server/batches/http';

/** A step's file, as stored (the download is audited). */
export const GET: RequestHandler = async (event) => {
	const user = requirePermission(event, 'batch.read');
	try {
		const file = await downloadAttachment(database.db, blobStore(), user, event.params.id, event.params.attachmentId);
		return new Response(file.bytes.slice().buffer as ArrayBuffer, {
			headers: {
				'content-type': file.contentType,
				'content-disposition': `attachment; filename*=UTF-8''${encodeURIComponent(file.filename)}`,
				'x-content-type-options': 'nosniff'
			}
		});
	} catch (err) {
		return refusal(database.db, err);
	}
};
