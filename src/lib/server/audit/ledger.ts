import { createHash } from 'node:crypto';
import { desc, sql } from 'drizzle-orm';
import { canonicalJson } from '$lib/domain/canonical';
import type { Tx } from '../db/client';
import { auditEvent } from '../db/schema';

/** Who acts. `id` is null for the system itself (start-up, seeding, scheduled jobs). */
export interface Actor {
	id: string | null;
	name: string;
}

export const systemActor: Actor = { id: null, name: 'Rimebook system' };

/** What a service says about its change; the ledger adds seq, time and the chain. */
export interface AuditInput {
	action: string;
	entityType: string;
	entityId?: string | null;
	batchId?: string | null;
	before?: unknown;
	after?: unknown;
	reason?: string | null;
}

export const GENESIS_HASH = '0'.repeat(64);

// Transaction-scoped advisory lock key that serialises appends, so the chain stays linear with
// many connections (design.md, "The audit ledger"). An arbitrary constant of our own.
const LEDGER_LOCK_KEY = 7_305_118_021;

/** The fields that are hashed, in the form verification rebuilds them from a stored row. */
export interface HashedEvent {
	seq: number;
	at: string;
	actorId: string | null;
	actorName: string;
	action: string;
	entityType: string;
	entityId: string | null;
	batchId: string | null;
	before: unknown;
	after: unknown;
	reason: string | null;
}

/** hash = SHA-256(prev_hash ‖ RFC 8785 canonical JSON of the event), hex. */
export function hashEvent(prevHash: string, event: HashedEvent): string {
	return createHash('sha256').update(prevHash).update(canonicalJson(event)).digest('hex');
}

/**
 * Appends one event inside the caller's transaction (21 CFR 11.10(e)): if the transaction rolls
 * back, so does the event. Returns the stored seq and hash.
 */
export async function appendEvent(tx: Tx, actor: Actor, input: AuditInput): Promise<{ seq: number; hash: string; at: string }> {
	await tx.execute(sql`select pg_advisory_xact_lock(${LEDGER_LOCK_KEY})`);
	const [last] = await tx
		.select({ seq: auditEvent.seq, hash: auditEvent.hash })
		.from(auditEvent)
		.orderBy(desc(auditEvent.seq))
		.limit(1);
	// Server time from the database clock, read under the lock, so `at` never runs backwards
	// along the chain even with several app nodes.
	const clock = await tx.execute<{ at: string }>(
		sql`select to_char(clock_timestamp() at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"') as at`
	);
	const at = rowsOf<{ at: string }>(clock)[0].at;
	const event: HashedEvent = {
		seq: (last?.seq ?? 0) + 1,
		at,
		actorId: actor.id,
		actorName: actor.name,
		action: input.action,
		entityType: input.entityType,
		entityId: input.entityId ?? null,
		batchId: input.batchId ?? null,
		before: normalise(input.before),
		after: normalise(input.after),
		reason: input.reason ?? null
	};
	const prevHash = last?.hash ?? GENESIS_HASH;
	const hash = hashEvent(prevHash, event);
	await tx.insert(auditEvent).values({ ...event, prevHash, hash });
	return { seq: event.seq, hash, at };
}

/** JSON round trip, so what is hashed is exactly what jsonb will give back (no undefined, Dates as ISO). */
function normalise(value: unknown): unknown {
	return value === undefined ? null : JSON.parse(JSON.stringify(value));
}

/** drizzle's execute() returns `{ rows }` on both drivers. */
export function rowsOf<T>(result: unknown): T[] {
	return (result as { rows: T[] }).rows;
}
