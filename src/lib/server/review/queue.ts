import { inArray } from 'drizzle-orm';
import type { Executor } from '../db/client';
import { batch } from '../db/schema';
import { listBatches, type BatchSummary } from '../batches/query';
import { loadReviewRecords, reviewItemsOf } from './records';
import { reviewStateOf } from '$lib/domain/review';

export interface ReviewQueueEntry extends BatchSummary {
	/** Awaiting review: every step performed (and verified where critical). */
	ready: boolean;
	items: number;
	unreviewed: number;
}

/**
 * QA's review queue: batches awaiting review first (every step performed, ready for review by
 * exception, 21 CFR 211.192), then those still in progress, marked not ready. Released and
 * rejected batches are done and not listed.
 */
export async function listReviewQueue(db: Executor): Promise<ReviewQueueEntry[]> {
	const open = await db.select({ id: batch.id }).from(batch).where(inArray(batch.status, ['awaiting-review', 'in-progress']));
	if (open.length === 0) return [];
	const ids = new Set(open.map((b) => b.id));
	const summaries = (await listBatches(db)).filter((s) => ids.has(s.id));
	const out: ReviewQueueEntry[] = [];
	for (const s of summaries) {
		const r = await loadReviewRecords(db, s.id);
		if (!r) continue;
		const items = reviewItemsOf(r).filter((i) => i.markable);
		out.push({ ...s, ready: s.status === 'awaiting-review', items: items.length, unreviewed: items.filter((i) => reviewStateOf(i, r.marks) !== 'reviewed').length });
	}
	return out.sort((a, b) => Number(b.ready) - Number(a.ready) || b.issuedAt.localeCompare(a.issuedAt));
}
