import { error, json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { buildReviewView, loadReviewRecords, markReviewed } from '$lib/server/review';
import { markBodySchema, REVIEW_BODY_MAX_BYTES, reviewRefusal } from '$lib/server/review/http';
import { invalidBody } from '$lib/server/batches/http';
import { readCappedJson } from '$lib/server/batches/body';

/** The review of a batch: items with their state, the release and reject gates, the disposition (211.192). */
export const GET: RequestHandler = async (event) => {
	const user = requirePermission(event, 'review.perform');
	const r = await loadReviewRecords(database.db, event.params.id);
	if (!r) error(404, { message: 'There is no such batch.' });
	const { template: _template, ...view } = await buildReviewView(database.db, r, user);
	return json(view);
};

/** Marks one item reviewed: `{ itemKey, itemHash, comment? }` (the hash as the reviewer saw it). */
export const POST: RequestHandler = async (event) => {
	const user = requirePermission(event, 'review.perform');
	try {
		const parsed = markBodySchema.safeParse(await readCappedJson(event.request, REVIEW_BODY_MAX_BYTES));
		if (!parsed.success) return invalidBody(parsed.error);
		return json(await markReviewed(database.db, user, { batchId: event.params.id, ...parsed.data }), { status: 201 });
	} catch (err) {
		return reviewRefusal(err);
	}
};
