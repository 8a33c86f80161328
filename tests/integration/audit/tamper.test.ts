import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { sql } from 'drizzle-orm';
import { TransactionRollbackError } from 'drizzle-orm';
import { createTestDatabase, databaseKinds, type TestDatabase } from '../support/databases';
import { appendSynthetic, one, prng } from './support';
import { canonicalEvent, GENESIS_HASH, hashEvent } from '$lib/server/audit/ledger';
import { verifyChain, type ChainReport } from '$lib/server/audit/verify';
import { createCheckpoint } from '$lib/server/audit/checkpoint';
import type { Tx } from '$lib/server/db/client';
import type { BreakKind } from '$lib/server/audit/chain';

/*
 * Tamper tests (issue 4, "Reliability"; 21 CFR 11.10(a), (e)): an attacker with database access
 * turns the append-only triggers off (session_replication_role = replica needs a superuser, as
 * PostgreSQL docs, "session_replication_role", say) and changes, deletes, inserts or swaps rows.
 * Every case runs in a transaction that is rolled back, so one chain serves 1,000 cases.
 */
const N = 60;
// The first checkpoint also makes the site signing key, an audited unit of work of its own
// (finding 16): event N + 1. Tampering targets the N synthetic events; the chain has TOTAL.
const TOTAL = N + 1;
const CASES = 1000;

type Tamper = { name: string; expected: { seq: number; kind: BreakKind }; run: (tx: Tx) => Promise<void> };

async function rowAt(tx: Tx, seq: number) {
	return one<{ canonical: string; prev_hash: string; hash: string }>(tx, sql`select canonical, prev_hash, hash from audit_event where seq = ${seq}`);
}

/** Moves rows with seq ≥ from by delta, in two steps so the primary key never collides mid-statement. */
async function shift(tx: Tx, from: number, delta: number) {
	await tx.execute(sql`update audit_event set seq = -seq where seq >= ${from}`);
	await tx.execute(sql`update audit_event set seq = -seq + ${delta} where seq < 0`);
}

function forgedEvent(seq: number) {
	return canonicalEvent({ seq, at: '2026-12-02T03:04:05.000006Z', actorId: 'u-forger', actorName: 'Nobody Real', action: 'batch.release', entityType: 'batch', entityId: 'b-x', batchId: 'b-x', before: null, after: { status: 'released' }, reason: null });
}

function makeTamper(rand: () => number, i: number): Tamper {
	const pick = (lo: number, hi: number) => lo + Math.floor(rand() * (hi - lo + 1));
	const k = pick(1, N);
	switch (i % 9) {
		case 0:
			return { name: `change payload of ${k}`, expected: { seq: k, kind: 'changed' }, run: async (tx) => {
				await tx.execute(sql`update audit_event set canonical = replace(canonical, '"actorName":"Vera Testwell"', '"actorName":"Vera Testwel1"') where seq = ${k}`);
			} };
		case 1:
			// Re-hashes the altered row; the next row's link (or the signed checkpoint for the last) shows it.
			return { name: `change and re-hash ${k}`, expected: { seq: k, kind: 'changed' }, run: async (tx) => {
				const r = await rowAt(tx, k);
				const canonical = r.canonical.replace('"entityType":"', '"entityType":"x');
				await tx.execute(sql`update audit_event set canonical = ${canonical}, hash = ${hashEvent(r.prev_hash, canonical)} where seq = ${k}`);
			} };
		case 2:
			return { name: `overwrite hash or prev_hash of ${k}`, expected: { seq: k, kind: 'changed' }, run: async (tx) => {
				const column = rand() < 0.5 ? sql.raw('hash') : sql.raw('prev_hash');
				await tx.execute(sql`update audit_event set ${column} = ${'f'.repeat(64)} where seq = ${k}`);
			} };
		case 3:
			return { name: `delete ${k}`, expected: { seq: k, kind: 'missing' }, run: async (tx) => {
				await tx.execute(sql`delete from audit_event where seq = ${k}`);
			} };
		case 4:
			return { name: `delete ${k} and renumber`, expected: { seq: k, kind: 'missing' }, run: async (tx) => {
				await tx.execute(sql`delete from audit_event where seq = ${k}`);
				await shift(tx, k + 1, -1);
			} };
		case 5:
			// A well-formed forgery: correct link to k-1 and a correct hash of its own.
			return { name: `insert a forged event at ${k}`, expected: { seq: k, kind: 'inserted' }, run: async (tx) => {
				const prev = k === 1 ? GENESIS_HASH : (await rowAt(tx, k - 1)).hash;
				await shift(tx, k, 1);
				const canonical = forgedEvent(k);
				await tx.execute(sql`insert into audit_event (seq, canonical, prev_hash, hash) values (${k}, ${canonical}, ${prev}, ${hashEvent(prev, canonical)})`);
			} };
		case 6:
			return { name: `insert a junk row at ${k}`, expected: { seq: k, kind: 'inserted' }, run: async (tx) => {
				await shift(tx, k, 1);
				await tx.execute(sql`insert into audit_event (seq, canonical, prev_hash, hash) values (${k}, ${forgedEvent(k)}, ${'a'.repeat(64)}, ${'b'.repeat(64)})`);
			} };
		case 7: {
			const a = pick(1, N - 1);
			const b = pick(a + 1, N);
			return { name: `swap ${a} and ${b}`, expected: { seq: a, kind: 'reordered' }, run: async (tx) => {
				await tx.execute(sql`update audit_event set seq = 0 where seq = ${a}`);
				await tx.execute(sql`update audit_event set seq = ${a} where seq = ${b}`);
				await tx.execute(sql`update audit_event set seq = ${b} where seq = 0`);
			} };
		}
		default:
			// The queryable columns are generated from the payload; to make them lie, the attacker must
			// first drop the generation expression (PostgreSQL 13+, ALTER COLUMN ... DROP EXPRESSION).
			return { name: `rewrite the reason column of ${k}`, expected: { seq: k, kind: 'changed' }, run: async (tx) => {
				await tx.execute(sql`alter table audit_event alter column reason drop expression`);
				await tx.execute(sql`update audit_event set reason = 'Rewritten afterwards' where seq = ${k}`);
			} };
	}
}

describe.each(databaseKinds)('tampering on %s is detected at the exact seq', (kind) => {
	let t: TestDatabase;
	beforeAll(async () => {
		t = await createTestDatabase(kind);
		await appendSynthetic(t.handle.db, N);
		await createCheckpoint(t.handle.db);
	});
	afterAll(async () => t?.dispose());

	it('verifies the untouched chain on both engines', async () => {
		for (const engine of ['app', 'database'] as const) {
			const report = await verifyChain(t.handle.db, { engine, roots: true });
			expect(report).toMatchObject({ ok: true, count: TOTAL, firstBreak: null, columnsGenerated: true, checkpoints: { checked: 1, latestSize: TOTAL, unanchored: 0 } });
			expect(report.head.seq).toBe(TOTAL);
		}
	});

	it(`detects ${CASES} random tamperings (change, delete, insert, swap), each at its seq, on both engines`, async () => {
		const rand = prng(20261201);
		const misses: string[] = [];
		for (let i = 0; i < CASES; i++) {
			const tamper = makeTamper(rand, i);
			const engine = i % 2 === 0 ? 'app' : 'database';
			let report: ChainReport | undefined;
			await t.handle.db
				.transaction(async (tx) => {
					await tx.execute(sql`set local session_replication_role = replica`);
					await tamper.run(tx);
					report = await verifyChain(tx, { engine, batchSize: 16 });
					tx.rollback();
				})
				.catch((err) => {
					if (!(err instanceof TransactionRollbackError)) throw err;
				});
			const got = report?.firstBreak;
			if (!report || report.ok || got?.seq !== tamper.expected.seq || got?.kind !== tamper.expected.kind) {
				misses.push(`${tamper.name} (${engine}): expected ${tamper.expected.kind}@${tamper.expected.seq}, got ${JSON.stringify(got)}`);
			} else if (report.count !== tamper.expected.seq - 1) {
				misses.push(`${tamper.name} (${engine}): count ${report.count}, expected ${tamper.expected.seq - 1}`);
			}
		}
		expect(misses).toEqual([]);
		// The rolled-back cases left the chain as it was.
		expect((await verifyChain(t.handle.db)).ok).toBe(true);
	}, 600_000);

	// The app engine reads whole batches as string_agg columns and, for big ledgers, hashes them in
	// a worker thread while the next batch is read (batch-verify.ts). Forced on here with small
	// batches, so the double-buffered path meets every kind of tampering too; `fast: false` is the
	// row-by-row read.
	it('detects 180 more tamperings with the worker-thread pipeline and with plain row reads', async () => {
		const rand = prng(20261202);
		const misses: string[] = [];
		for (let i = 0; i < 180; i++) {
			const tamper = makeTamper(rand, i);
			const options = i % 2 === 0 ? { engine: 'app' as const, batchSize: 8, worker: true } : { engine: 'app' as const, batchSize: 8, fast: false };
			let report: ChainReport | undefined;
			await t.handle.db
				.transaction(async (tx) => {
					await tx.execute(sql`set local session_replication_role = replica`);
					await tamper.run(tx);
					report = await verifyChain(tx, options);
					tx.rollback();
				})
				.catch((err) => {
					if (!(err instanceof TransactionRollbackError)) throw err;
				});
			const got = report?.firstBreak;
			if (!report || report.ok || got?.seq !== tamper.expected.seq || got?.kind !== tamper.expected.kind || report.count !== tamper.expected.seq - 1) {
				misses.push(`${tamper.name} (${JSON.stringify(options)}): expected ${tamper.expected.kind}@${tamper.expected.seq}, got ${JSON.stringify(got)} count ${report?.count}`);
			}
		}
		expect(misses).toEqual([]);
		const clean = await verifyChain(t.handle.db, { engine: 'app', batchSize: 7, worker: true });
		expect(clean).toMatchObject({ ok: true, count: TOTAL, head: { seq: TOTAL } });
	}, 600_000);

	it('detects a forged checkpoint signature and a re-hashed rewrite of the whole chain', async () => {
		await t.handle.db
			.transaction(async (tx) => {
				await tx.execute(sql`set local session_replication_role = replica`);
				await tx.execute(sql`update audit_checkpoint set root = ${'c'.repeat(64)}`);
				const report = await verifyChain(tx);
				expect(report.firstBreak).toEqual({ seq: TOTAL, kind: 'changed', reason: 'checkpoint-signature' });
				tx.rollback();
			})
			.catch((err) => {
				if (!(err instanceof TransactionRollbackError)) throw err;
			});
		await t.handle.db
			.transaction(async (tx) => {
				await tx.execute(sql`set local session_replication_role = replica`);
				// Rewrites event 30 and re-hashes every later event: the chain is consistent again,
				// only the signed head names the difference (RFC 9162's reason for signed tree heads).
				let prev = (await rowAt(tx, 29)).hash;
				for (let s = 30; s <= TOTAL; s++) {
					const r = await rowAt(tx, s);
					const canonical = s === 30 ? r.canonical.replace('"action":"', '"action":"x') : r.canonical;
					const hash = hashEvent(prev, canonical);
					await tx.execute(sql`update audit_event set canonical = ${canonical}, prev_hash = ${prev}, hash = ${hash} where seq = ${s}`);
					prev = hash;
				}
				const report = await verifyChain(tx, { engine: 'app' });
				expect(report.firstBreak).toEqual({ seq: TOTAL, kind: 'changed', reason: 'checkpoint-head' });
				tx.rollback();
			})
			.catch((err) => {
				if (!(err instanceof TransactionRollbackError)) throw err;
			});
	});
});
