import { bigint, index, jsonb, pgTable, text, timestamp } from 'drizzle-orm/pg-core';

/**
 * The audit ledger (21 CFR 11.10(e); Annex 11, 9). Append-only: database triggers reject
 * UPDATE, DELETE and TRUNCATE. hash = SHA-256(prev_hash ‖ RFC 8785 canonical JSON of the event).
 */
export const auditEvent = pgTable(
	'audit_event',
	{
		seq: bigint('seq', { mode: 'number' }).primaryKey(),
		at: timestamp('at', { withTimezone: true, mode: 'string' }).notNull(),
		actorId: text('actor_id'),
		actorName: text('actor_name').notNull(),
		action: text('action').notNull(),
		entityType: text('entity_type').notNull(),
		entityId: text('entity_id'),
		batchId: text('batch_id'),
		before: jsonb('before'),
		after: jsonb('after'),
		reason: text('reason'),
		prevHash: text('prev_hash').notNull(),
		hash: text('hash').notNull()
	},
	(t) => [
		index('audit_event_batch_idx').on(t.batchId, t.seq),
		index('audit_event_entity_idx').on(t.entityType, t.entityId, t.seq),
		index('audit_event_actor_idx').on(t.actorId, t.seq),
		index('audit_event_at_idx').on(t.at)
	]
);

export type AuditEvent = typeof auditEvent.$inferSelect;
