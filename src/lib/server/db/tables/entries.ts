import { boolean, index, integer, jsonb, pgTable, text, timestamp, uniqueIndex } from 'drizzle-orm/pg-core';
import { user } from './identity';
import { batch } from './batches';

/**
 * Reasons a correction may give (EU GMP Ch. 4.9: a correction states its reason). Managed by
 * administrators; a code is never deleted, only retired (`active = false`), so old corrections
 * keep naming a reason that exists.
 */
export const reasonCode = pgTable('reason_code', {
	code: text('code').primaryKey(),
	label: text('label').notNull(),
	active: boolean('active').notNull().default(true),
	sortOrder: integer('sort_order').notNull().default(0),
	createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow()
});

/**
 * What a person recorded for one step of an executed batch record, signed "performed". Never
 * updated or deleted: a correction is a new row whose `supersedes` names the row it replaces
 * (EU GMP Ch. 4.9; 21 CFR 11.10(e): earlier values are never obscured). The unique index on
 * `supersedes` keeps each step's history a single line: an entry is superseded at most once.
 */
export const stepEntry = pgTable(
	'step_entry',
	{
		id: text('id').primaryKey(),
		batchId: text('batch_id')
			.notNull()
			.references(() => batch.id),
		stepKey: text('step_key').notNull(),
		/** Field key → stored value (numbers canonical, with what was typed beside them). */
		values: jsonb('values').notNull(),
		/** Calculated and yield fields of this step as computed at entry. */
		calculations: jsonb('calculations').notNull(),
		/** Field keys whose values were out of limits when entered. */
		outOfLimits: jsonb('out_of_limits').$type<string[]>().notNull(),
		comment: text('comment'),
		/** For a correction: the reason code and the entry it supersedes. */
		reasonCode: text('reason_code').references(() => reasonCode.code),
		supersedes: text('supersedes'),
		/** When the work was done, as the performer states it; late if long before `recordedAt`. */
		workedAt: timestamp('worked_at', { withTimezone: true, mode: 'string' }).notNull(),
		recordedAt: timestamp('recorded_at', { withTimezone: true, mode: 'string' }).notNull(),
		late: boolean('late').notNull().default(false),
		performedBy: text('performed_by')
			.notNull()
			.references(() => user.id),
		performedByName: text('performed_by_name').notNull(),
		signatureId: text('signature_id').notNull()
	},
	(t) => [index('step_entry_batch_idx').on(t.batchId, t.stepKey), uniqueIndex('step_entry_supersedes_key').on(t.supersedes)]
);

/** A second person's check of a critical step's entry, signed "verified" (211.188(b)(11); Annex 11, 6). */
export const stepVerification = pgTable(
	'step_verification',
	{
		id: text('id').primaryKey(),
		batchId: text('batch_id')
			.notNull()
			.references(() => batch.id),
		stepKey: text('step_key').notNull(),
		entryId: text('entry_id')
			.notNull()
			.references(() => stepEntry.id),
		verifiedBy: text('verified_by')
			.notNull()
			.references(() => user.id),
		verifiedByName: text('verified_by_name').notNull(),
		verifiedAt: timestamp('verified_at', { withTimezone: true, mode: 'string' }).notNull(),
		signatureId: text('signature_id').notNull()
	},
	(t) => [index('step_verification_batch_idx').on(t.batchId), uniqueIndex('step_verification_entry_key').on(t.entryId)]
);

export type ReasonCode = typeof reasonCode.$inferSelect;
export type StepEntry = typeof stepEntry.$inferSelect;
export type StepVerification = typeof stepVerification.$inferSelect;
