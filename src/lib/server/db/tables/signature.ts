import { bigint, index, pgTable, text, timestamp } from 'drizzle-orm/pg-core';
import { user } from './identity';

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
	(t) => [
		index('signature_entity_idx').on(t.entityType, t.entityId),
		index('signature_batch_idx').on(t.batchId),
		index('signature_signer_idx').on(t.signerId, t.at)
	]
);

export type Signature = typeof signature.$inferSelect;
