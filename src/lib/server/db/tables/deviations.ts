import { index, integer, jsonb, pgSequence, pgTable, text, timestamp, uniqueIndex } from 'drizzle-orm/pg-core';
import { user } from './identity';
import { batch } from './batches';
import { cycleRun } from './cycles';

export const deviationStatus = ['open', 'investigating', 'pending-qa-approval', 'closed', 'cancelled'] as const;
export type DeviationStatus = (typeof deviationStatus)[number];
export const deviationSource = ['auto', 'manual'] as const;
/** Classification by risk to the product (common GMP practice: minor, major, critical). */
export const deviationClassification = ['minor', 'major', 'critical'] as const;
export type DeviationClassification = (typeof deviationClassification)[number];

/** Numbers DEV-<year>-<n> come from one sequence, so concurrent raises never collide. */
export const deviationNumberSeq = pgSequence('deviation_number_seq', { startWith: 1 });

/**
 * A deviation (21 CFR 211.100(b), 211.192): raised automatically (issue 6, 7) or by hand, then
 * investigated, submitted and closed by QA (issue 8, $lib/domain/deviation-lifecycle). Its history
 * is the audit trail and the signature table (entity type `deviation`), not columns here.
 */
export const deviation = pgTable(
	'deviation',
	{
		id: text('id').primaryKey(),
		number: text('number').notNull(),
		batchId: text('batch_id').references(() => batch.id),
		stepKey: text('step_key'),
		/** The step entry that raised it (out-of-limit values); null when something else did. */
		entryId: text('entry_id'),
		/** The cycle run that raised it (a freeze-drying excursion, issue 7); null otherwise. */
		runId: text('run_id').references(() => cycleRun.id),
		source: text('source', { enum: deviationSource }).notNull(),
		/** What kind of event: out-of-limit, cycle-excursion, … */
		kind: text('kind').notNull(),
		title: text('title').notNull(),
		description: text('description').notNull(),
		status: text('status', { enum: deviationStatus }).notNull().default('open'),
		createdAt: timestamp('created_at', { withTimezone: true, mode: 'string' }).notNull().defaultNow(),
		createdBy: text('created_by').references(() => user.id),
		createdByName: text('created_by_name').notNull(),
		classification: text('classification', { enum: deviationClassification }),
		immediateAction: text('immediate_action'),
		investigation: text('investigation'),
		rootCause: text('root_cause'),
		/** Impact on the batch (211.192: the investigation extends to what the discrepancy affects). */
		impact: text('impact'),
		/** References to CAPA records kept elsewhere (free text each, e.g. "CAPA-2026-014"). */
		capaRefs: jsonb('capa_refs').$type<string[]>().notNull().default([]),
		cancelReason: text('cancel_reason'),
		closureComment: text('closure_comment'),
		/** Who submitted the investigation for QA approval: they may not approve its closure. */
		submittedBy: text('submitted_by').references(() => user.id),
		submittedAt: timestamp('submitted_at', { withTimezone: true, mode: 'string' }),
		/** Optimistic concurrency: every change adds one; a change against an older version is refused (409). */
		version: integer('version').notNull().default(1),
		updatedAt: timestamp('updated_at', { withTimezone: true, mode: 'string' }).notNull().defaultNow()
	},
	(t) => [uniqueIndex('deviation_number_key').on(t.number), index('deviation_batch_idx').on(t.batchId, t.stepKey), index('deviation_status_idx').on(t.status), index('deviation_run_idx').on(t.runId)]
);

export type Deviation = typeof deviation.$inferSelect;
