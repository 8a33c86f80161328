import { createHash, randomUUID } from 'node:crypto';
import { and, eq } from 'drizzle-orm';
import type { Database } from '../db/client';
import { attachment, batch, blob } from '../db/schema';
import { runUnitOfWork } from '../work';
import { actorOf } from '../auth/account';
import type { SessionUser } from '../auth/types';
import type { BlobStore } from '../blobs/store';
import { ALLOWED_TYPES, DEFAULT_MAX_MB, matchesType } from '../blobs/policy';
import { findStep } from '$lib/domain/batch/judge';
import { ExecutionError } from './errors';
import { bumpBatchVersion } from './state';
import { isBatchOpen } from '$lib/domain/batch/status';

export interface UploadRequest {
	user: SessionUser;
	batchId: string;
	stepKey: string;
	fieldKey?: string | null;
	filename: string;
	contentType: string;
	bytes: Uint8Array;
}

/** The largest upload a step or field takes, bytes (the attachment field's maxSizeMb, else the site default). */
export async function uploadLimit(db: Database, batchId: string, stepKey: string, fieldKey?: string | null): Promise<{ maxBytes: number; types: readonly string[] }> {
	const [b] = await db.select({ snapshot: batch.snapshot }).from(batch).where(eq(batch.id, batchId));
	if (!b) throw new ExecutionError('not-found', 'There is no such batch.');
	const step = findStep(b.snapshot as never, stepKey);
	if (!step) throw new ExecutionError('not-found', `This batch has no step ${stepKey}.`);
	if (fieldKey) {
		const f = step.fields.find((x) => x.key === fieldKey);
		if (!f || f.kind !== 'attachment') throw new ExecutionError('invalid-input', `${fieldKey} is not a file field of this step.`);
		return { maxBytes: f.maxSizeMb * 1024 * 1024, types: f.accept.filter((t) => (ALLOWED_TYPES as readonly string[]).includes(t)) };
	}
	return { maxBytes: DEFAULT_MAX_MB * 1024 * 1024, types: ALLOWED_TYPES };
}

/**
 * Stores a file for a step: allow-listed type whose bytes match it, within the size limit, named
 * by its SHA-256; the attachment row and its audit event in one unit of work (21 CFR 11.10(e)).
 */
export async function uploadAttachment(db: Database, store: BlobStore, req: UploadRequest) {
	const [b] = await db.select().from(batch).where(eq(batch.id, req.batchId));
	if (!b) throw new ExecutionError('not-found', 'There is no such batch.');
	if (!isBatchOpen(b.status)) throw new ExecutionError('batch-closed', `Batch ${b.number} is ${b.status}: nothing more can be attached.`);
	const step = findStep(b.snapshot as never, req.stepKey);
	if (!step) throw new ExecutionError('not-found', `This batch has no step ${req.stepKey}.`);
	if (!step.roles.some((r) => req.user.roles.includes(r))) throw new ExecutionError('wrong-role', `Step ${step.title} is performed by ${step.roles.join(' or ')}.`);
	const limit = await uploadLimit(db, req.batchId, req.stepKey, req.fieldKey);
	if (req.bytes.byteLength > limit.maxBytes) throw new ExecutionError('file-too-large', `The file is ${(req.bytes.byteLength / 1048576).toFixed(1)} MB; at most ${limit.maxBytes / 1048576} MB is taken.`);
	if (req.bytes.byteLength === 0) throw new ExecutionError('invalid-input', 'The file is empty.');
	if (!limit.types.includes(req.contentType)) throw new ExecutionError('file-type-refused', `Files of type ${req.contentType || 'unknown'} are not taken here; allowed: ${limit.types.join(', ')}.`);
	if (!matchesType(req.contentType, req.bytes)) throw new ExecutionError('file-type-refused', `The file's content is not ${req.contentType}.`);
	const filename = req.filename.replace(/[\\/\u0000-\u001f]/g, '_').slice(0, 200) || 'file';
	const sha256 = createHash('sha256').update(req.bytes).digest('hex');
	await store.put(sha256, req.bytes, req.contentType);
	return runUnitOfWork(db, actorOf(req.user), async (uow) => {
		// Under the batch's row lock: it may have closed while the file was read.
		const [locked] = await uow.tx.select({ status: batch.status }).from(batch).where(eq(batch.id, b.id)).for('update');
		if (!locked || !isBatchOpen(locked.status)) throw new ExecutionError('batch-closed', `Batch ${b.number} is ${locked?.status ?? 'gone'}: nothing more can be attached.`);
		await uow.tx.insert(blob).values({ sha256, size: req.bytes.byteLength, contentType: req.contentType, store: store.kind }).onConflictDoNothing();
		const id = randomUUID();
		const row = { id, batchId: b.id, stepKey: step.key, fieldKey: req.fieldKey ?? null, sha256, filename, contentType: req.contentType, size: req.bytes.byteLength, uploadedBy: req.user.id, uploadedByName: req.user.name };
		await uow.tx.insert(attachment).values(row);
		await uow.audit({ action: 'attachment.upload', entityType: 'attachment', entityId: id, batchId: b.id, after: row });
		// A new version, so pages watching the batch see the file.
		await bumpBatchVersion(uow.tx, b.id);
		return { id, sha256, filename, contentType: req.contentType, size: req.bytes.byteLength };
	});
}

/** Reads a step's file; every download is audited (who read which record, and when). */
export async function downloadAttachment(db: Database, store: BlobStore, user: SessionUser, batchId: string, attachmentId: string) {
	const [a] = await db.select().from(attachment).where(and(eq(attachment.id, attachmentId), eq(attachment.batchId, batchId)));
	if (!a) throw new ExecutionError('not-found', 'There is no such file.');
	const bytes = await store.get(a.sha256);
	if (!bytes) throw new Error(`Blob ${a.sha256} is missing from the ${store.kind} store.`);
	// 11.10(a): the bytes must still be the ones stored under this name.
	if (createHash('sha256').update(bytes).digest('hex') !== a.sha256) throw new Error(`Blob ${a.sha256} does not match its hash.`);
	await runUnitOfWork(db, actorOf(user), (uow) => uow.audit({ action: 'attachment.download', entityType: 'attachment', entityId: a.id, batchId, after: { sha256: a.sha256, filename: a.filename } }));
	return { bytes, filename: a.filename, contentType: a.contentType };
}
