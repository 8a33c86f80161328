import { index, integer, jsonb, numeric, pgTable, text, timestamp, uniqueIndex } from 'drizzle-orm/pg-core';
import { user } from './identity';
import { masterRecord } from './masters';

export const batchStatus = ['issued', 'in-progress', 'awaiting-review', 'released', 'rejected'] as const;
export type BatchStatus = (typeof batchStatus)[number];

/** An executed batch record: a frozen snapshot of its master with the snapshot's SHA-256 (211.188). */
export const batch = pgTable(
	'batch',
	{
		id: text('id').primaryKey(),
		number: text('number').notNull(),
		masterRecordId: text('master_record_id')
			.notNull()
			.references(() => masterRecord.id),
		status: text('status', { enum: batchStatus }).notNull().default('issued'),
		batchSize: numeric('batch_size', { mode: 'number' }).notNull(),
		batchSizeUnit: text('batch_size_unit').notNull(),
		snapshot: jsonb('snapshot').notNull(),
		snapshotHash: text('snapshot_hash').notNull(),
		/** Quantities and limits scaled to this batch's size at issue (ScaledTemplate). */
		scaled: jsonb('scaled'),
		issuedBy: text('issued_by').references(() => user.id),
		issuedAt: timestamp('issued_at', { withTimezone: true }).notNull().defaultNow(),
		/** Optimistic concurrency: bumped by every change to the batch or its entries. */
		version: integer('version').notNull().default(1)
	},
	(t) => [uniqueIndex('batch_number_key').on(t.number), index('batch_status_idx').on(t.status)]
);

export type Batch = typeof batch.$inferSelect;
