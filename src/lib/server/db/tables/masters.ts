import { sql } from 'drizzle-orm';
import { index, integer, jsonb, pgTable, text, timestamp, uniqueIndex } from 'drizzle-orm/pg-core';
import { user } from './identity';

export const masterStatus = ['draft', 'in-review', 'approved', 'effective', 'superseded', 'retired'] as const;
export type MasterStatus = (typeof masterStatus)[number];

/**
 * One version of a master batch record (21 CFR 211.186). Only a draft's template changes; once
 * submitted, the template and its hash are frozen (a trigger refuses any later change, migration
 * 0005). The people and times of each lifecycle step are kept here for the rules (the approver is
 * never an author of the version: 211.186(a)); the signatures themselves are in `signature`.
 */
export const masterRecord = pgTable(
	'master_record',
	{
		id: text('id').primaryKey(),
		code: text('code').notNull(),
		version: integer('version').notNull(),
		product: text('product').notNull(),
		status: text('status', { enum: masterStatus }).notNull().default('draft'),
		template: jsonb('template').notNull(),
		/** SHA-256 of the RFC 8785 canonical template content (hashTemplate: without header.status). */
		templateHash: text('template_hash').notNull(),
		createdBy: text('created_by').references(() => user.id),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
		effectiveAt: timestamp('effective_at', { withTimezone: true }),
		/** The version this one was copied from (a new version starts as a copy of the latest). */
		basedOnId: text('based_on_id'),
		/** Everyone who wrote this version's content: creator and every editor (211.186(a)). */
		authors: text('authors').array().notNull().default(sql`'{}'::text[]`),
		updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
		/** Optimistic concurrency for draft edits: bumped by every change of the row. */
		revision: integer('revision').notNull().default(1),
		submittedBy: text('submitted_by').references(() => user.id),
		submittedAt: timestamp('submitted_at', { withTimezone: true }),
		approvedBy: text('approved_by').references(() => user.id),
		approvedAt: timestamp('approved_at', { withTimezone: true }),
		supersededAt: timestamp('superseded_at', { withTimezone: true }),
		retiredAt: timestamp('retired_at', { withTimezone: true })
	},
	(t) => [
		uniqueIndex('master_record_version_key').on(t.code, t.version),
		// At most one effective version per product code: making one effective supersedes the other.
		uniqueIndex('master_record_effective_key').on(t.code).where(sql`${t.status} = 'effective'`),
		index('master_record_status_idx').on(t.status)
	]
);

export type MasterRecord = typeof masterRecord.$inferSelect;
