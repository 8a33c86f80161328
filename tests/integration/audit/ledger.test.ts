import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { is, sql } from 'drizzle-orm';
import { getTableConfig, PgTable } from 'drizzle-orm/pg-core';
import { drizzle } from 'drizzle-orm/node-postgres';
import pg from 'pg';
import * as schema from '$lib/server/db/schema';
import { pgErrorCode, type Database } from '$lib/server/db/client';
import { runUnitOfWork, UnauditedWorkError } from '$lib/server/work';
import { canonicalParts, hashEvent, LEDGER_LOCK_KEY, rowsOf, systemActor } from '$lib/server/audit/ledger';
import { verifyChain } from '$lib/server/audit/verify';
import { seedDemo } from '$lib/server/db/seed';
import { createTestDatabase, databaseKinds, type TestDatabase } from '../support/databases';
import { appendSynthetic, testActor } from './support';

describe.each(databaseKinds)('the ledger on %s', (kind) => {
	let t: TestDatabase;
	beforeAll(async () => {
		t = await createTestDatabase(kind);
		await appendSynthetic(t.handle.db, 5);
	});
	afterAll(async () => t?.dispose());

	// 21 CFR 11.10(e) (never obscure earlier entries) and 11.70 (signatures cannot be removed):
	// triggers reject the change even for the table owner / superuser this test connects as.
	it.each(['audit_event', 'signature', 'audit_checkpoint', 'audit_signing_key'])('rejects UPDATE, DELETE and TRUNCATE on %s in the database itself', async (table) => {
		const target = sql.raw(`"${table}"`);
		const column = sql.raw(table === 'audit_event' ? 'hash' : table === 'signature' ? 'meaning' : table === 'audit_checkpoint' ? 'root' : 'public_key');
		for (const statement of [sql`update ${target} set ${column} = 'x'`, sql`delete from ${target}`, sql`truncate ${target}`]) {
			const err = await t.handle.db.execute(statement).then(
				() => null,
				(e: unknown) => e
			);
			expect(pgErrorCode(err)).toBe('RB001');
		}
		const [{ n }] = rowsOf<{ n: number }>(await t.handle.db.execute(sql`select count(*)::int as n from audit_event`));
		expect(n).toBe(5);
	});

	it('still appends, and keeps seq gap-free with server UTC times that never run backwards', async () => {
		const rows = rowsOf<{ seq: number; at: string }>(
			await t.handle.db.execute(sql`select seq::int as seq, to_char(at at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"') as at from audit_event order by seq`)
		);
		expect(rows.map((r) => r.seq)).toEqual([1, 2, 3, 4, 5]);
		for (let i = 1; i < rows.length; i++) expect(rows[i].at >= rows[i - 1].at).toBe(true);
		expect((await verifyChain(t.handle.db)).ok).toBe(true);
	});

	it('appends under the ledger lock LEDGER_LOCK_KEY, the one checkpoints take (rimebook_append_audit_event, migration 0023)', async () => {
		await runUnitOfWork(t.handle.db, testActor, async (uow) => {
			const appended = await uow.audit({ action: 'setting.update', entityType: 'setting', entityId: 'audit.test.lock', after: { on: true } });
			// PostgreSQL docs, "pg_locks": a bigint advisory key shows as classid = high 32 bits, objid = low 32 bits, objsubid = 1.
			const [{ n }] = rowsOf<{ n: number }>(
				await uow.tx.execute(sql`select count(*)::int as n from pg_locks where locktype = 'advisory' and pid = pg_backend_pid() and objsubid = 1
					and classid::bigint = ${Math.floor(LEDGER_LOCK_KEY / 2 ** 32)} and objid::bigint = ${LEDGER_LOCK_KEY % 2 ** 32}`)
			);
			expect(n).toBe(1);
			const [row] = rowsOf<{ canonical: string; prev_hash: string; hash: string }>(await uow.tx.execute(sql`select canonical, prev_hash, hash from audit_event where seq = ${appended.seq}`));
			expect(row.hash).toBe(appended.hash);
			expect(hashEvent(row.prev_hash, row.canonical)).toBe(row.hash);
			expect(JSON.parse(row.canonical)).toMatchObject({ seq: appended.seq, at: appended.at, actorName: testActor.name, after: { on: true } });
		});
		expect((await verifyChain(t.handle.db, { engine: 'app' })).ok).toBe(true);
	});

	it('keeps one chain when the previous release\'s rimebook_append_event (migration 0010) appends between new appends (rolling upgrade)', async () => {
		const { head, tail } = canonicalParts({ actorId: testActor.id, actorName: testActor.name, action: 'setting.update', entityType: 'setting', entityId: 'audit.test.upgrade', batchId: null, before: null, after: { old: true }, reason: null });
		const before = (await verifyChain(t.handle.db, { engine: 'app' })).count;
		await t.handle.db.transaction(async (tx) => void (await tx.execute(sql`select appended_seq from rimebook_append_event(${head}, ${tail})`)));
		await runUnitOfWork(t.handle.db, testActor, (uow) => uow.audit({ action: 'setting.update', entityType: 'setting', entityId: 'audit.test.upgrade', after: { old: false } }));
		for (const engine of ['app', 'database'] as const) expect(await verifyChain(t.handle.db, { engine })).toMatchObject({ ok: true, count: before + 2 });
	});

	it('rolls back a unit of work that changes data without an audit event (runUnitOfWork, design.md "One write path")', async () => {
		await expect(
			runUnitOfWork(t.handle.db, testActor, async (uow) => {
				await uow.tx.insert(schema.setting).values({ key: 'audit.test.silent', value: {} });
			})
		).rejects.toBeInstanceOf(UnauditedWorkError);
		const left = rowsOf<{ n: number }>(await t.handle.db.execute(sql`select count(*)::int as n from setting where key = 'audit.test.silent'`));
		expect(left[0].n).toBe(0);
	});

	it('stores columns generated from the hashed payload, so they cannot disagree with it', async () => {
		const err = await t.handle.db.execute(sql`insert into audit_event (seq, canonical, prev_hash, hash, reason) values (99, '{}', 'x', 'y', 'z')`).then(
			() => null,
			(e: unknown) => e
		);
		// PostgreSQL: "cannot insert a non-DEFAULT value into column" of a generated column (SQLSTATE 428C9).
		expect(pgErrorCode(err)).toBe('428C9');
		const [row] = rowsOf<{ ok: boolean }>(await t.handle.db.execute(sql`select (canonical::jsonb ->> 'actorName') = actor_name and (canonical::jsonb -> 'after') = after as ok from audit_event where seq = 2`));
		expect(row.ok).toBe(true);
	});
});

describe.runIf(databaseKinds.includes('postgresql'))('20 concurrent connections on a PostgreSQL server', () => {
	let t: TestDatabase;
	let pool: pg.Pool;
	beforeAll(async () => {
		t = await createTestDatabase('postgresql');
		pool = new pg.Pool({ connectionString: t.url, max: 20 });
		pool.on('connect', (client) => client.on('error', () => {}));
	});
	afterAll(async () => {
		await pool?.end();
		await t?.dispose();
	});

	it('leave one linear chain: no gap, no fork, every hash verified (design.md: appends serialised by an advisory lock)', async () => {
		const db = drizzle(pool, { schema }) as unknown as Database;
		const clients = 20;
		const each = 15;
		const backends = new Set<number>();
		await Promise.all(
			Array.from({ length: clients }, (_, c) =>
				(async () => {
					for (let i = 0; i < each; i++) {
						await runUnitOfWork(db, { id: `u-${c}`, name: `Synthetic writer ${c}` }, async (uow) => {
							const [{ pid }] = rowsOf<{ pid: number }>(await uow.tx.execute(sql`select pg_backend_pid() as pid`));
							backends.add(pid);
							await uow.tx.insert(schema.setting).values({ key: `concurrency.${c}.${i}`, value: { c, i } });
							await uow.audit({ action: 'setting.create', entityType: 'setting', entityId: `concurrency.${c}.${i}`, after: { c, i } });
						});
					}
				})()
			)
		);
		expect(backends.size).toBe(clients);
		const rows = rowsOf<{ n: number; first: number; last: number; links: number }>(
			await db.execute(sql`select count(*)::int as n, min(seq)::int as first, max(seq)::int as last, count(distinct prev_hash)::int as links from audit_event`)
		);
		expect(rows[0]).toEqual({ n: clients * each, first: 1, last: clients * each, links: clients * each });
		const report = await verifyChain(db, { engine: 'app' });
		expect(report).toMatchObject({ ok: true, count: clients * each, firstBreak: null });
	}, 120_000);
});

/*
 * Completeness (issue 4, "Inside the unit of work"): every table is either written only through
 * runUnitOfWork — so each change carries its audit event, or the work is rolled back — or is on
 * the short exempt list below with the reason. A new table fails this test until someone decides.
 */
const auditedThroughUnitOfWork = [
	'setting', 'user', 'user_role', 'passkey', 'api_token', 'acknowledgement', 'signature',
	'material', 'material_lot', 'equipment', 'equipment_event', 'instrument', 'reason_code',
	'master_record', 'batch', 'step_entry', 'step_verification', 'deviation',
	'cycle_run', 'cycle_series', 'cycle_mapping', 'leak_test',
	// The chart overview is derived from the series and written in the run's own unit of work.
	'cycle_overview',
	// Attachments: the blob row is written in the same unit of work as its attachment event.
	'attachment', 'blob',
	// QA's review marks and the disposition are written with their audit event (and signature).
	'review_mark', 'batch_disposition',
	// A person's choice of notifications is audited with before and after.
	'notification_preference'
];
const exempt: Record<string, string> = {
	session: 'sign-in and sign-out are audited as events; the session row itself is transient state (Lucia)',
	sign_in_attempt: 'a rate-limit counter; failed sign-ins and lockouts are audited as events',
	webauthn_challenge: 'single-use, short-lived ceremony state with no GMP meaning',
	audit_event: 'the ledger itself',
	audit_checkpoint: "the ledger's signed tree heads (append-only, verified by verifyChain)",
	audit_signing_key: "the ledger's signing key (append-only)",
	mail_outbox: 'delivery state of notifications, written in the unit of work of the audited action that caused them; not a GMP record'
};

describe('audit completeness of the schema', () => {
	it('lists every table as audited through runUnitOfWork or as exempt with a reason', () => {
		const tables = (Object.values(schema) as unknown[])
			.filter((v): v is PgTable => is(v, PgTable))
			.map((tbl) => getTableConfig(tbl).name)
			.sort();
		const unlisted = tables.filter((name) => !auditedThroughUnitOfWork.includes(name) && !(name in exempt));
		expect(unlisted).toEqual([]);
		// And the lists name no table that does not exist.
		expect([...auditedThroughUnitOfWork, ...Object.keys(exempt)].filter((n) => !tables.includes(n))).toEqual([]);
	});
});

describe.each(databaseKinds)('the demo seed on %s', (kind) => {
	let t: TestDatabase;
	beforeAll(async () => {
		t = await createTestDatabase(kind);
		await seedDemo(t.handle.db, { password: 'frost-demo-2026' });
	});
	afterAll(async () => t?.dispose());

	it('gives every seeded row its create event (ALCOA+ "complete"; 21 CFR 11.10(e) creates are audited)', async () => {
		const events = rowsOf<{ action: string; entity_type: string; entity_id: string; after: Record<string, unknown> | null; actor_id: string | null }>(
			await t.handle.db.execute(sql`select action, entity_type, entity_id, after, actor_id from audit_event order by seq`)
		);
		const created = (type: string) => new Set(events.filter((e) => e.action === `${type}.create` && e.entity_type === type).map((e) => e.entity_id));
		for (const [type, table] of [
			['user', 'user'],
			['material', 'material'],
			['material-lot', 'material_lot'],
			['equipment', 'equipment']
		] as const) {
			const ids = rowsOf<{ id: string }>(await t.handle.db.execute(sql.raw(`select id from "${table}"`))).map((r) => r.id);
			expect(ids.length).toBeGreaterThan(0);
			const have = created(type);
			expect(ids.filter((id) => !have.has(id))).toEqual([]);
		}
		const settings = rowsOf<{ key: string }>(await t.handle.db.execute(sql`select key from setting`)).map((r) => r.key);
		expect(settings.filter((k) => !created('setting').has(k))).toEqual([]);
		// Role grants travel in the user's create event (Annex 11, 12.3: grants are recorded).
		const grants = rowsOf<{ user_id: string; role: string }>(await t.handle.db.execute(sql`select user_id, role from user_role`));
		for (const g of grants) {
			const e = events.find((x) => x.action === 'user.create' && x.entity_id === g.user_id);
			expect(e?.after?.roles).toContain(g.role);
		}
		// The people, materials, lots and equipment are seeded by the system itself.
		expect(events.filter((e) => ['user.create', 'material.create', 'material-lot.create', 'equipment.create'].includes(e.action)).every((e) => e.actor_id === systemActor.id)).toBe(true);
		expect((await verifyChain(t.handle.db, { engine: 'app' })).ok).toBe(true);
	});
});
