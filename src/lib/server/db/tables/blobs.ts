import { bigint, index, pgTable, text, timestamp } from 'drizzle-orm/pg-core';
import { user } from './identity';
import { batch } from './batches';

/** A stored file, named by the SHA-256 of its bytes (content-addressed: the same bytes are stored once). */
export const blob = pgTable('blob', {
	sha256: text('sha256').primaryKey(),
	size: bigint('size', { mode: 'number' }).notNull(),
	contentType: text('content_type').notNull(),
	/** Where the bytes are: local | s3. */
	store: text('store').notNull(),
	createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow()
});

/** A file attached to a step of a batch (a photo, a printout, a certificate). Never deleted. */
export const attachment = pgTable(
	'attachment',
	{
		id: text('id').primaryKey(),
		batchId: text('batch_id')
			.notNull()
			.references(() => batch.id),
		stepKey: text('step_key').notNull(),
		/** The attachment field it is meant for, or null for a step's general attachments. */
		fieldKey: text('field_key'),
		sha256: text('sha256')
			.notNull()
			.references(() => blob.sha256),
		filename: text('filename').notNull(),
		contentType: text('content_type').notNull(),
		size: bigint('size', { mode: 'number' }).notNull(),
		uploadedBy: text('uploaded_by')
			.notNull()
			.references(() => user.id),
		uploadedByName: text('uploaded_by_name').notNull(),
		uploadedAt: timestamp('uploaded_at', { withTimezone: true, mode: 'string' }).notNull().defaultNow()
	},
	(t) => [index('attachment_batch_idx').on(t.batchId, t.stepKey)]
);

export type Blob = typeof blob.$inferSelect;
export type Attachment = typeof attachment.$inferSelect;
