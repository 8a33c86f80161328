import { createHash } from 'node:crypto';
import { canonicalJson } from '$lib/domain/canonical';
import type { Tx } from '../db/client';
import { queryRows } from './rows';

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

/** prev_hash of event 1. */
export const GENESIS_HASH = '0'.repeat(64);

// Transaction-scoped advisory lock key that serialises appends, so the chain stays linear with
// many connections (design.md, "The audit ledger"). An arbitrary constant of our own, also written
// into rimebook_append_audit_event (migrations 0010, 0023); checkpoints take the same lock so a tree head always names a committed prefix.
export const LEDGER_LOCK_KEY = 7_305_118_021;

/**
 * The event as hashed. Its RFC 8785 text is stored verbatim in audit_event.canonical; the
 * queryable columns are generated from that text by the database (tables/audit.ts). Keys sort as
 * RFC 8785 3.2.3 says, so `seq` is always the last member: `…,"seq":123}`.
 */
export interface HashedEvent {
	seq: number;
	/** Database server time in UTC, ISO 8601 with microseconds and "Z" (timestamptz precision). */
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

export class AuditPayloadError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'AuditPayloadError';
	}
}

/**
 * hash = SHA-256(prev_hash ‖ canonical), hex; the bytes are the 64 ASCII hex digits of prev_hash
 * followed by the UTF-8 of the RFC 8785 text (design.md, "The audit ledger").
 */
export function hashEvent(prevHash: string, canonical: string): string {
	return createHash('sha256').update(prevHash).update(canonical).digest('hex');
}

/**
 * The RFC 8785 text of an event. Values pass through a JSON round trip first (what is hashed is
 * what JSON can say: no undefined, Dates as ISO strings, NaN as null). PostgreSQL's jsonb cannot
 * hold U+0000 nor an unpaired surrogate, so such text is refused here with a clear message rather
 * than failing later inside the generated columns.
 */
export function canonicalEvent(event: HashedEvent): string {
	const { head, tail } = canonicalParts(event);
	return spliceCanonical(head, tail, event.at, event.seq);
}

/** The event without the two members the database fills in (seq, at). */
export type EventBody = Omit<HashedEvent, 'seq' | 'at'>;

/**
 * The RFC 8785 text of an event in the two parts around its "at" member, which is how the
 * database function rimebook_append_audit_event (migrations 0010, 0023) receives it. RFC 8785 3.2.3 sorts the
 * members by key (action, actorId, actorName, after | at | batchId, before, entityId, entityType,
 * reason | seq) and serialises each member on its own, so canonicalising the groups separately and
 * joining them gives exactly the canonicaliser's text of the whole event (a unit test checks this
 * against canonicalize's own output).
 */
export function canonicalParts(event: EventBody): { head: string; tail: string } {
	let head: string;
	let tail: string;
	try {
		head = canonicalJson({ action: event.action, actorId: event.actorId, actorName: event.actorName, after: normalise(event.after) });
		tail = canonicalJson({ batchId: event.batchId, before: normalise(event.before), entityId: event.entityId, entityType: event.entityType, reason: event.reason });
	} catch (cause) {
		// canonicalize refuses unpaired surrogates (RFC 8785 3.2.2.2 needs well-formed Unicode).
		throw new AuditPayloadError(`An audit event cannot be canonicalised: ${cause instanceof Error ? cause.message : String(cause)}.`);
	}
	// An odd run of backslashes before "u0000" is an escape of U+0000, not escaped text.
	for (const text of [head, tail]) if (/(?<!\\)(?:\\\\)*\\u0000/.test(text)) throw new AuditPayloadError('An audit event cannot contain the character U+0000.');
	return { head: head.slice(0, -1), tail: tail.slice(1, -1) };
}

/** The same splice as rimebook_append_audit_event: head ‖ ,"at":"…", ‖ tail ‖ ,"seq":N}. */
export function spliceCanonical(head: string, tail: string, at: string, seq: number): string {
	if (!/^[0-9]{4}-[0-9]{2}-[0-9]{2}T[0-9]{2}:[0-9]{2}:[0-9]{2}\.[0-9]{6}Z$/.test(at) || !Number.isSafeInteger(seq) || seq < 1) {
		throw new AuditPayloadError('An audit event needs a UTC time with microseconds and a positive seq.');
	}
	return `${head},"at":"${at}",${tail},"seq":${seq}}`;
}

/**
 * Appends one event inside the caller's transaction (21 CFR 11.10(e)): if the transaction rolls
 * back, so does the event. Returns the stored seq and hash.
 *
 * One statement: rimebook_append_audit_event (migration 0023; 0010 is the same as a table
 * function) takes the ledger lock, reads the head and the database clock under it (so `at` never runs backwards along the chain even with several app
 * nodes), splices seq and at into the canonical text, hashes and inserts. The hash it returns is
 * checked here against node:crypto over the same bytes, so a database that hashed wrongly is
 * caught at once instead of at the next verification.
 */
export async function appendEvent(tx: Tx, actor: Actor, input: AuditInput): Promise<{ seq: number; hash: string; at: string }> {
	const { head, tail } = canonicalParts({
		actorId: actor.id,
		actorName: actor.name,
		action: input.action,
		entityType: input.entityType,
		entityId: input.entityId ?? null,
		batchId: input.batchId ?? null,
		before: input.before ?? null,
		after: input.after ?? null,
		reason: input.reason ?? null
	});
	const [[appended]] = await queryRows<[string[]]>(tx, 'select rimebook_append_audit_event($1, $2)', [head, tail]);
	const [seqText, at, prevHash, hash] = appended;
	const seq = Number(seqText);
	if (hashEvent(prevHash, spliceCanonical(head, tail, at, seq)) !== hash) throw new Error(`The database hashed audit event ${seq} differently from node:crypto; the unit of work was rolled back.`);
	return { seq, hash, at };
}

function normalise(value: unknown): unknown {
	return value === undefined ? null : JSON.parse(JSON.stringify(value));
}

/** drizzle's execute() returns `{ rows }` on both drivers. */
export function rowsOf<T>(result: unknown): T[] {
	return (result as { rows: T[] }).rows;
}
