import { bigint, index, jsonb, pgTable, text, timestamp } from 'drizzle-orm/pg-core';
import { user } from './identity';

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

/**
 * Electronic signatures (21 CFR 11.50, 11.70). Append-only like the ledger. The content hash binds
 * the signature to the exact canonical content signed.
 */
export const signature = pgTable(
	'signature',
	{
		id: text('id').primaryKey(),
		signerId: text('signer_id')
			.notNull()
			.references(() => user.id),
		/** Printed name at signing time (11.50(a)(1)). */
		printedName: text('printed_name').notNull(),
		meaning: text('meaning').notNull(),
		/** Server UTC time (11.50(a)(2)). */
		at: timestamp('at', { withTimezone: true, mode: 'string' }).notNull(),
		/** The site time zone in force when signed, for the manifestation. */
		timeZone: text('time_zone').notNull(),
		method: text('method', { enum: ['password', 'passkey'] }).notNull(),
		entityType: text('entity_type').notNull(),
		entityId: text('entity_id').notNull(),
		batchId: text('batch_id'),
		/** SHA-256 (hex) of the RFC 8785 canonical JSON of the content signed (11.70). */
		contentHash: text('content_hash').notNull(),
		auditSeq: bigint('audit_seq', { mode: 'number' })
	},
	(t) => [index('signature_entity_idx').on(t.entityType, t.entityId), index('signature_batch_idx').on(t.batchId)]
);

export type AuditEvent = typeof auditEvent.$inferSelect;
export type Signature = typeof signature.$inferSelect;
