import { sql } from 'drizzle-orm';
import { bigint, index, jsonb, pgTable, text, timestamp } from 'drizzle-orm/pg-core';

/*
 * The audit ledger (21 CFR 11.10(e); Annex 11, 9 and 12.4). Append-only: triggers created by the
 * migration "append_only_ledger" reject UPDATE, DELETE and TRUNCATE on every table in this file.
 *
 * Round-trip decision (why `canonical` exists): hash = SHA-256(prev_hash ‖ canonical), where
 * `canonical` is the exact RFC 8785 text that was hashed, stored verbatim as `text`. jsonb would
 * not give those bytes back (it reorders keys by length, keeps numerics as decimals — `1.0` stays
 * `1.0`, `1e21` comes back as `1000000000000000000000` — and timestamptz prints in the session's
 * TimeZone with trimmed microseconds), so verification never re-serialises columns: it hashes the
 * stored text. The queryable columns (at, actor, action, entity, batch, before, after, reason) are
 * GENERATED ALWAYS from `canonical` by PostgreSQL itself, so they cannot disagree with what was
 * hashed unless someone alters the table definition — which verifyChain checks in the catalogue
 * (and then compares every row). `seq` is the one stored key; its payload copy is checked per row.
 */
const payload = (key: string) => sql.raw(`((canonical)::jsonb ->> '${key}')`);
const payloadJson = (key: string) => sql.raw(`nullif(((canonical)::jsonb -> '${key}'), 'null'::jsonb)`);

export const auditEvent = pgTable(
	'audit_event',
	{
		seq: bigint('seq', { mode: 'number' }).primaryKey(),
		/** The RFC 8785 canonical JSON of the event: the exact bytes hashed. */
		canonical: text('canonical').notNull(),
		prevHash: text('prev_hash').notNull(),
		hash: text('hash').notNull(),
		// rimebook_audit_instant() is an IMMUTABLE wrapper (the payload's `at` is always ISO 8601 UTC
		// with "Z", so the cast cannot depend on TimeZone or DateStyle); created by migration 0001.
		at: timestamp('at', { withTimezone: true, mode: 'string' })
			.notNull()
			.generatedAlwaysAs(sql.raw(`rimebook_audit_instant(((canonical)::jsonb ->> 'at'))`)),
		actorId: text('actor_id').generatedAlwaysAs(payload('actorId')),
		actorName: text('actor_name').notNull().generatedAlwaysAs(payload('actorName')),
		action: text('action').notNull().generatedAlwaysAs(payload('action')),
		entityType: text('entity_type').notNull().generatedAlwaysAs(payload('entityType')),
		entityId: text('entity_id').generatedAlwaysAs(payload('entityId')),
		batchId: text('batch_id').generatedAlwaysAs(payload('batchId')),
		before: jsonb('before').generatedAlwaysAs(payloadJson('before')),
		after: jsonb('after').generatedAlwaysAs(payloadJson('after')),
		reason: text('reason').generatedAlwaysAs(payload('reason'))
	},
	(t) => [
		index('audit_event_batch_idx').on(t.batchId, t.seq),
		index('audit_event_entity_idx').on(t.entityType, t.entityId, t.seq),
		index('audit_event_actor_idx').on(t.actorId, t.seq),
		index('audit_event_at_idx').on(t.at)
	]
);

/**
 * Signed tree heads (RFC 9162, 4.10 in spirit): the Merkle root over the hashes of events 1..size
 * and the chain head, signed with the site's Ed25519 key. `statement` is the exact RFC 8785 text
 * that was signed, so the signature can be checked without re-serialising columns.
 */
export const auditCheckpoint = pgTable('audit_checkpoint', {
	size: bigint('size', { mode: 'number' }).primaryKey(),
	root: text('root').notNull(),
	headHash: text('head_hash').notNull(),
	at: timestamp('at', { withTimezone: true, mode: 'string' }).notNull(),
	statement: text('statement').notNull(),
	signature: text('signature').notNull(),
	keyId: text('key_id').notNull(),
	/** Roots of the perfect subtrees of this tree (largest first): lets the next checkpoint hash only new leaves. Not signed; a wrong one yields a root that fails verification. */
	frontier: jsonb('frontier').$type<string[]>().notNull()
});

/**
 * The site's checkpoint-signing keys (Ed25519), kept in the database so every app node signs with
 * the same key. A new key is a new row; the newest is in use. Production sites should keep the
 * private key in a key manager (HSM/KMS) instead; this table is the self-contained default.
 */
export const auditSigningKey = pgTable('audit_signing_key', {
	id: text('id').primaryKey(),
	publicKey: text('public_key').notNull(),
	privateKey: text('private_key').notNull(),
	createdAt: timestamp('created_at', { withTimezone: true, mode: 'string' }).notNull().defaultNow()
});

export type AuditEvent = typeof auditEvent.$inferSelect;
export type AuditCheckpoint = typeof auditCheckpoint.$inferSelect;
