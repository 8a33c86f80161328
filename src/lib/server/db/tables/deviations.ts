import { index, pgSequence, pgTable, text, timestamp, uniqueIndex } from 'drizzle-orm/pg-core';
import { user } from './identity';
import { batch } from './batches';
import { cycleRun } from './cycles';

export const deviationStatus = ['open', 'investigating', 'pending-qa-approval', 'closed', 'cancelled'] as const;
export type DeviationStatus = (typeof deviationStatus)[number];
export const deviationSource = ['auto', 'manual'] as const;

/** Numbers DEV-<year>-<n> come from one sequence, so concurrent raises never collide. */
export const deviationNumberSeq = pgSequence('deviation_number_seq', { startWith: 1 });

/**
 * A deviation (21 CFR 211.100(b), 211.192): minimal here (issue 6 raises them automatically);
 * the deviation workflow (issue 8) adds investigation, CAPA and closure in its own tables.
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
		createdByName: text('created_by_name').notNull()
	},
	(t) => [uniqueIndex('deviation_number_key').on(t.number), index('deviation_batch_idx').on(t.batchId, t.stepKey), index('deviation_status_idx').on(t.status), index('deviation_run_idx').on(t.runId)]
);

export type Deviation = typeof deviation.$inferSelect;
