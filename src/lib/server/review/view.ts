import type { Executor } from '../db/client';
import type { SessionUser } from '../auth/types';
import { computeProgress } from '$lib/domain/batch/progress';
import type { GateResult } from '$lib/domain/disposition';
import type { SignatureFacts } from '$lib/domain/signature';
import type { Template } from '$lib/schemas/template';
import { dispositionSignature, itemViewsOf, reviewItemsOf, type ReviewItemView, type ReviewRecords } from './records';
import { judgeDisposition } from './disposition';

export interface ReviewView {
	batch: { id: string; number: string; product: string; productCode: string; status: string; version: number; progress: { done: number; total: number } };
	template: Template;
	items: ReviewItemView[];
	counts: { items: number; markable: number; reviewed: number };
	deviations: { id: string; number: string; title: string; status: string }[];
	/** The gates as they stand for the viewer (release, and reject with a comment assumed). */
	release: GateResult;
	reject: GateResult;
	disposition: { decision: string; comment: string | null; decidedByName: string; decidedAt: string; signature: SignatureFacts | null } | null;
}

/** The review page and GET /api/batches/<id>/review: items with their state, the gates and the disposition. */
export async function buildReviewView(db: Executor, r: ReviewRecords, viewer: SessionUser): Promise<ReviewView> {
	const { records } = r;
	const items = itemViewsOf(reviewItemsOf(r), r.marks);
	const progress = computeProgress(records.template, { entries: records.entries, verifications: records.verifications, deviations: records.deviations });
	const markable = items.filter((i) => i.markable);
	const d = r.disposition;
	return {
		batch: {
			id: records.batch.id,
			number: records.batch.number,
			product: records.template.header.productName,
			productCode: records.template.header.productCode,
			status: records.batch.status,
			version: records.batch.version,
			progress: { done: progress.done, total: progress.total }
		},
		template: records.template,
		items,
		counts: { items: items.length, markable: markable.length, reviewed: markable.filter((i) => i.state === 'reviewed').length },
		deviations: records.deviations.map((x) => ({ id: x.id, number: x.number, title: x.title, status: x.status })),
		release: await judgeDisposition(r, viewer, 'released', null),
		// Judged as if a comment were given: the page asks for it in the dialog.
		reject: await judgeDisposition(r, viewer, 'rejected', '—'),
		disposition: d ? { decision: d.decision, comment: d.comment, decidedByName: d.decidedByName, decidedAt: d.decidedAt, signature: await dispositionSignature(db, d) } : null
	};
}
