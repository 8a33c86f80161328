import { index, pgTable, text, timestamp, uniqueIndex } from 'drizzle-orm/pg-core';
import { user } from './identity';
import { batch } from './batches';

/**
 * QA's "reviewed" mark on one review item of a batch (review by exception, 21 CFR 211.192; FDA
 * Data Integrity Q&A 2018, Q7). `itemKey` names the item, `itemHash` is the hash of its content
 * when it was marked ($lib/domain/review): a mark counts only while the item still has that hash.
 * Never updated or deleted (append-only trigger, migration review_marks): marking again after a
 * change adds a row, so the history of who reviewed what stays.
 */
export const reviewMark = pgTable(
	'review_mark',
	{
		id: text('id').primaryKey(),
		batchId: text('batch_id')
			.notNull()
			.references(() => batch.id),
		itemKey: text('item_key').notNull(),
		itemHash: text('item_hash').notNull(),
		markedBy: text('marked_by')
			.notNull()
			.references(() => user.id),
		markedByName: text('marked_by_name').notNull(),
		markedAt: timestamp('marked_at', { withTimezone: true, mode: 'string' }).notNull(),
		comment: text('comment')
	},
	(t) => [index('review_mark_batch_idx').on(t.batchId, t.itemKey), uniqueIndex('review_mark_item_hash_key').on(t.batchId, t.itemKey, t.itemHash)]
);

/**
 * The disposition of a batch: released or rejected by QA with an e-signature (meaning `released`
 * or `rejected`, 21 CFR 11.50) and a comment. At most one per batch (primary key) and never
 * changed (append-only trigger); the batch's status moves to the decision in the same unit of
 * work and can never move again (trigger batch_disposed).
 */
export const batchDisposition = pgTable('batch_disposition', {
	batchId: text('batch_id')
		.primaryKey()
		.references(() => batch.id),
	decision: text('decision', { enum: ['released', 'rejected'] }).notNull(),
	comment: text('comment'),
	signatureId: text('signature_id').notNull(),
	decidedBy: text('decided_by')
		.notNull()
		.references(() => user.id),
	decidedByName: text('decided_by_name').notNull(),
	decidedAt: timestamp('decided_at', { withTimezone: true, mode: 'string' }).notNull()
});

export type ReviewMark = typeof reviewMark.$inferSelect;
export type BatchDisposition = typeof batchDisposition.$inferSelect;
