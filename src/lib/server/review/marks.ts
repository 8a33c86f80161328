import { randomUUID } from 'node:crypto';
import type { Database } from '../db/client';
import { reviewMark } from '../db/schema';
import { runUnitOfWork } from '../work';
import { actorOf } from '../auth/account';
import type { SessionUser } from '../auth/types';
import { isBatchOpen } from '$lib/domain/batch/status';
import { reviewStateOf } from '$lib/domain/review';
import { ReviewError } from './errors';
import { loadReviewRecords, reviewItemsOf } from './records';

export interface MarkReviewedRequest {
	batchId: string;
	itemKey: string;
	/** The hash of the item as the reviewer saw it: marking a version they did not see is refused. */
	itemHash: string;
	comment?: string | null;
}

/**
 * QA marks one review item reviewed (21 CFR 211.192; FDA Data Integrity Q&A 2018, Q7), with an
 * optional comment: one unit of work with its audit event, under the batch's row lock so the item
 * is judged against the data as it is when the mark is written. The caller checks `review.perform`.
 */
export async function markReviewed(db: Database, user: SessionUser, req: MarkReviewedRequest): Promise<{ id: string; itemKey: string; itemHash: string; markedAt: string }> {
	const comment = req.comment?.trim() || null;
	if (comment && comment.length > 2000) throw new ReviewError('invalid-input', 'A comment is at most 2000 characters.');
	return runUnitOfWork(db, actorOf(user), async (uow) => {
		const r = await loadReviewRecords(uow.tx, req.batchId, { lock: true });
		if (!r) throw new ReviewError('not-found', 'There is no such batch.');
		const b = r.records.batch;
		if (!isBatchOpen(b.status)) throw new ReviewError('batch-closed', `Batch ${b.number} is ${b.status}: its review is closed.`);
		const item = reviewItemsOf(r).find((i) => i.key === req.itemKey);
		if (!item) throw new ReviewError('unknown-item', `Batch ${b.number} has no review item ${req.itemKey}.`);
		if (!item.markable) throw new ReviewError('not-markable', 'This item is completed by signing or verifying the step, not by a review mark.');
		if (item.hash !== req.itemHash) throw new ReviewError('item-changed', 'The item changed since you opened it. Nothing was marked; look at it again.');
		if (reviewStateOf(item, r.marks) === 'reviewed') throw new ReviewError('already-reviewed', 'This item is already marked reviewed in its current form.');
		const row = { id: randomUUID(), batchId: b.id, itemKey: item.key, itemHash: item.hash, markedBy: user.id, markedByName: user.name, markedAt: new Date().toISOString(), comment };
		const appended = await uow.audit({ action: 'review.mark', entityType: 'review-mark', entityId: row.id, batchId: b.id, after: { itemKey: row.itemKey, itemHash: row.itemHash, kind: item.kind, comment }, reason: comment });
		// The ledger's clock is the time of record, so the mark and its event agree.
		row.markedAt = appended.at;
		await uow.tx.insert(reviewMark).values(row);
		return { id: row.id, itemKey: row.itemKey, itemHash: row.itemHash, markedAt: row.markedAt };
	});
}
