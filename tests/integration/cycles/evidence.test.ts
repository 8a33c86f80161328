/**
 * Cycle evidence as part of the batch record, on every database kind (REVIEW round 2, findings 4,
 * 9, 10, 11, 15, 29, 32): a run or leak test writes to the batch only while it is open and under
 * the batch's row lock, bumps its version, and is append-only in the database; the series
 * SHA-256 is fixed at import. Batches, dryers and logs are invented.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync, cpSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { and, eq, sql } from 'drizzle-orm';
import pg from 'pg';
import { createTestDatabase, databaseKinds, type TestDatabase } from '../support/databases';
import { createTestActor, createTestBatch, createTestDryer } from './support';
import { buildSyntheticCycle, writeCsvLog } from '$lib/domain/lyo/synthetic';
import { cycleLogMappingSchema } from '$lib/domain/lyo/mapping';
import { createSucroseRecipe } from '../../unit/lyo/fixtures';
import { auditEvent, batch, cycleRun, deviation } from '$lib/server/db/schema';
import { pgErrorCode } from '$lib/server/db/client';
import { rowsOf, type Actor } from '$lib/server/audit/ledger';
import type { SessionUser } from '$lib/server/auth/types';

let t: TestDatabase;
vi.mock('$lib/server/db', () => ({
	get database() {
		return t.handle;
	}
}));
const { CycleRunError, importRun } = await import('$lib/server/cycles/runs');
const { hashSeries, loadSeries, clearSeriesCache } = await import('$lib/server/cycles/series-store');
const { LeakTestError, recordRunLeakTest } = await import('$lib/server/cycles/leak');
const { listOpenRecipeSteps } = await import('$lib/server/cycles/recipe-source');
const { load: importPageLoad } = await import('../../../src/routes/(app)/cycles/import/+page.server');
const { POST: leakTestRoute } = await import('../../../src/routes/api/runs/[id]/leak-tests/+server');

const recipe = createSucroseRecipe();
// Invented log with a pressure rise of 0.002 Pa/s over 600 s: Q = 500 L × 0.00002 mbar/s = 0.01 mbar·L/s
// (lyophilization.md, "Pressure-rise (leak) test"), above a 0.005 limit and below 0.02.
const RISE = { startS: 50_000, durationS: 600, slopePaPerS: 0.002 };
const { series: truth } = buildSyntheticCycle({ recipe, sampleS: 10, seed: 11, noise: { pressureRel: 0.002 }, pressureRise: RISE });
const csv = writeCsvLog(truth, { time: 'elapsed-seconds', pressureUnit: 'mbar', placeholder: '999.9' });
const mapping = cycleLogMappingSchema.parse({
	headerRow: 1,
	time: { column: 'Time', format: 'elapsed-seconds' },
	channels: truth.channels.map((c) => ({ column: c.id, role: c.role, unit: c.unit === 'Pa' ? 'mbar' : 'degC' })),
	placeholders: [999.9]
});
const upload = () => ({ fileName: 'cycle.csv', bytes: new TextEncoder().encode(csv), mapping });

async function versionOf(batchId: string): Promise<number> {
	const [row] = await t.handle.db.select({ version: batch.version }).from(batch).where(eq(batch.id, batchId));
	return row.version;
}

describe.each(databaseKinds)('cycle evidence in the batch record on %s', (kind) => {
	let actor: Actor;
	let dryerId: string;
	let strictDryerId: string;

	beforeAll(async () => {
		t = await createTestDatabase(kind);
		actor = await createTestActor(t.handle.db);
		dryerId = (await createTestDryer(t.handle.db, actor)).dryer.id;
		strictDryerId = (await createTestDryer(t.handle.db, actor, 'LYO-T3', '2099-01-01', 0.005)).dryer.id;
	});
	afterAll(async () => {
		clearSeriesCache();
		await t?.dispose();
	});

	// Finding 4: same open-status rule as entries (awaiting-review is open), and a new version.
	it('imports into an awaiting-review batch and bumps its version once', async () => {
		const batchId = await createTestBatch(t.handle.db, actor, 'awaiting-review');
		const before = await versionOf(batchId);
		const result = await importRun(t.handle.db, actor, { equipmentId: dryerId, recipe: null, batchId, stepKey: 'lyo_cycle' }, upload());
		expect(result.batchVersion).toBe(before + 1);
		expect(await versionOf(batchId)).toBe(before + 1);
		const run = await importRun(t.handle.db, actor, { equipmentId: dryerId, recipe, batchId: null, stepKey: null }, upload());
		expect(run.batchVersion).toBeNull();
		expect(await versionOf(batchId)).toBe(before + 1);
	});

	// Finding 32: the series SHA-256 is stored at import, equal to the hash of the stored series and the audit event's.
	it('stores the series SHA-256 on the run at import', async () => {
		const { runId } = await importRun(t.handle.db, actor, { equipmentId: dryerId, recipe, batchId: null, stepKey: null }, upload());
		const [row] = await t.handle.db.select({ seriesSha256: cycleRun.seriesSha256 }).from(cycleRun).where(eq(cycleRun.id, runId));
		const stored = await loadSeries(t.handle.db, runId);
		expect(row.seriesSha256).toMatch(/^[0-9a-f]{64}$/);
		expect(row.seriesSha256).toBe(hashSeries(stored!));
		const [event] = await t.handle.db.select({ after: auditEvent.after }).from(auditEvent).where(and(eq(auditEvent.entityId, runId), eq(auditEvent.action, 'cycle-run.import')));
		expect((event.after as { seriesSha256: string }).seriesSha256).toBe(row.seriesSha256);
	});

	// Finding 11: a failed leak test on a batch's run raises a deviation, is audited with the batch and bumps its version.
	it('raises a deviation for a failed leak test on a batch run, with the batch in its audit event', async () => {
		const batchId = await createTestBatch(t.handle.db, actor);
		const { runId } = await importRun(t.handle.db, actor, { equipmentId: strictDryerId, recipe: null, batchId, stepKey: 'lyo_cycle' }, upload());
		const before = await versionOf(batchId);
		const test = await recordRunLeakTest(t.handle.db, actor, runId, { fromS: RISE.startS + 10, toS: RISE.startS + RISE.durationS });
		expect(test.passed).toBe(false); // 0.01 > 0.005 mbar·L/s
		const raised = await t.handle.db.select().from(deviation).where(and(eq(deviation.batchId, batchId), eq(deviation.kind, 'leak-test-failed')));
		expect(raised).toHaveLength(1);
		expect(raised[0]).toMatchObject({ runId, stepKey: 'lyo_cycle', source: 'auto', status: 'open' });
		const [event] = await t.handle.db.select({ batchId: auditEvent.batchId, after: auditEvent.after }).from(auditEvent).where(and(eq(auditEvent.entityId, test.id), eq(auditEvent.action, 'leak-test.record')));
		expect(event.batchId).toBe(batchId);
		expect((event.after as { deviation: string }).deviation).toBe(raised[0].number);
		expect(await versionOf(batchId)).toBe(before + 1);
		// A passing test on a dryer with the usual limit raises none but still versions the batch.
		const other = await createTestBatch(t.handle.db, actor);
		const ok = await importRun(t.handle.db, actor, { equipmentId: dryerId, recipe: null, batchId: other, stepKey: 'lyo_cycle' }, upload());
		const v = await versionOf(other);
		expect((await recordRunLeakTest(t.handle.db, actor, ok.runId, { fromS: RISE.startS + 10, toS: RISE.startS + RISE.durationS })).passed).toBe(true);
		expect(await t.handle.db.select().from(deviation).where(and(eq(deviation.batchId, other), eq(deviation.kind, 'leak-test-failed')))).toHaveLength(0);
		expect(await versionOf(other)).toBe(v + 1);
	});

	it('refuses a leak test on the run of a closed batch, an unknown run and a backwards window (finding 9 service)', async () => {
		const batchId = await createTestBatch(t.handle.db, actor);
		const { runId } = await importRun(t.handle.db, actor, { equipmentId: dryerId, recipe: null, batchId, stepKey: 'lyo_cycle' }, upload());
		// Played as QA's release, straight in the table (the release flow is not under test here).
		await t.handle.db.update(batch).set({ status: 'released' }).where(eq(batch.id, batchId));
		const closed = await recordRunLeakTest(t.handle.db, actor, runId, { fromS: RISE.startS + 10, toS: RISE.startS + RISE.durationS }).catch((e: unknown) => e);
		expect(closed).toBeInstanceOf(LeakTestError);
		expect(closed).toMatchObject({ status: 409, code: 'batch-closed', params: { status: 'released' } });
		const unknown = await recordRunLeakTest(t.handle.db, actor, 'no-such-run', { fromS: 0, toS: 10 }).catch((e: unknown) => e);
		expect(unknown).toMatchObject({ status: 404, code: 'run-not-found' });
		const backwards = await recordRunLeakTest(t.handle.db, actor, runId, { fromS: 100, toS: 50 }).catch((e: unknown) => e);
		expect(backwards).toMatchObject({ status: 400, code: 'invalid-window' });
		// The route only parses (under a 64 KB cap, finding 8), guards and calls the service.
		const operator: SessionUser = { id: actor.id!, username: 'op', name: actor.name, kind: 'person', roles: ['operator'], mustChangePassword: false, locale: 'en' };
		const post = (body: string) => {
			const url = new URL(`http://localhost/api/runs/${runId}/leak-tests`);
			return leakTestRoute({ url, params: { id: runId }, locals: { user: operator, session: null, requestId: 'test', locale: 'en' }, request: new Request(url, { method: 'POST', body }) } as never);
		};
		const refused = await post(JSON.stringify({ fromS: RISE.startS + 10, toS: RISE.startS + RISE.durationS }));
		expect(refused.status).toBe(409); // the batch is released
		// The API keeps its English message and adds the stable code.
		expect(await refused.json()).toEqual({ code: 'batch-closed', message: expect.stringMatching(/is released; nothing more can be recorded/) });
		expect((await post('{"fromS":')).status).toBe(400);
		expect((await post(JSON.stringify({ fromS: 0, toS: 10, pad: 'x'.repeat(70_000) }))).status).toBe(413);
	});

	// Findings 10 and 29: one service lists open batches with recipe steps; the page preselects ?batch&step.
	it('lists open batches with a recipe step and preselects the step the step page links to', async () => {
		const review = await createTestBatch(t.handle.db, actor, 'awaiting-review');
		const released = await createTestBatch(t.handle.db, actor, 'released');
		const listed = await listOpenRecipeSteps(t.handle.db);
		const mine = listed.find((b) => b.id === review);
		expect(mine?.steps.map((s) => s.key)).toEqual(['lyo_cycle']); // the demo template's one recipe step
		expect(listed.some((b) => b.id === released)).toBe(false);
		const operator: SessionUser = { id: actor.id!, username: 'op', name: actor.name, kind: 'person', roles: ['operator'], mustChangePassword: false, locale: 'en' };
		const loadWith = async (query: string) => {
			const url = new URL(`http://localhost/cycles/import?${query}`);
			return (await importPageLoad({ url, params: {}, locals: { user: operator, session: null, requestId: 'test', locale: 'en' } } as never)) as { preselectStep: string | null };
		};
		expect((await loadWith(`batch=${review}&step=lyo_cycle`)).preselectStep).toBe(`${review}|lyo_cycle`);
		expect((await loadWith(`batch=${review}&step=loading`)).preselectStep).toBeNull(); // a step without a recipe is not offered
		expect((await loadWith(`batch=${released}&step=lyo_cycle`)).preselectStep).toBeNull();
	});

	// Finding 15: 21 CFR 11.10(e) / 11.70 — the run, series, overview and leak tests refuse change in the database.
	it.each(['cycle_run', 'cycle_series', 'cycle_overview', 'leak_test'])('rejects UPDATE and DELETE on %s, and TRUNCATE', async (table) => {
		const target = sql.raw(`"${table}"`);
		const column = sql.raw(table === 'cycle_series' || table === 'cycle_overview' ? 'run_id' : 'id');
		const statements = [sql`update ${target} set ${column} = ${column}`, sql`delete from ${target}`];
		// cycle_run is referenced by foreign keys, so PostgreSQL refuses a plain TRUNCATE before any trigger; its trigger is checked in the catalogue below.
		if (table !== 'cycle_run') statements.push(sql`truncate ${target}`);
		for (const statement of statements) {
			const err = await t.handle.db.execute(statement).then(
				() => null,
				(e: unknown) => e
			);
			expect(pgErrorCode(err)).toBe('RB001');
		}
		// PostgreSQL 15 docs, pg_trigger.tgtype: bit 5 (32) = TRUNCATE, 8 = DELETE, 16 = UPDATE, 2 = BEFORE.
		const [trigger] = rowsOf<{ tgtype: number }>(await t.handle.db.execute(sql`select tgtype::int as tgtype from pg_trigger where tgrelid = ${table}::regclass and tgname = ${`${table}_append_only`}`));
		expect(trigger.tgtype & (32 | 16 | 8 | 2)).toBe(32 | 16 | 8 | 2);
	});
});

describe.each(databaseKinds.filter((k) => k === 'postgresql'))('the batch lock of a run import on %s', (kind) => {
	let actor: Actor;
	let dryerId: string;
	beforeAll(async () => {
		t = await createTestDatabase(kind);
		actor = await createTestActor(t.handle.db);
		dryerId = (await createTestDryer(t.handle.db, actor)).dryer.id;
	});
	afterAll(async () => t?.dispose());

	// Finding 4: the batch closes (committed by another connection) after the import's first check
	// and before its write: the locked re-check inside the unit of work refuses the run.
	it('refuses a run when the batch closes between the first check and the write', async () => {
		const batchId = await createTestBatch(t.handle.db, actor);
		const other = new pg.Client({ connectionString: t.url });
		await other.connect();
		try {
			await other.query('begin');
			await other.query(`update batch set status = 'released' where id = $1`, [batchId]);
			const pending = importRun(t.handle.db, actor, { equipmentId: dryerId, recipe: null, batchId, stepKey: 'lyo_cycle' }, upload()).then(
				() => null,
				(e: unknown) => e
			);
			// Wait until the import waits on the batch row lock (PostgreSQL 15 docs, pg_stat_activity.wait_event_type = 'Lock').
			for (let i = 0; i < 200; i++) {
				const { rows } = await other.query(`select count(*)::int as n from pg_stat_activity where datname = current_database() and wait_event_type = 'Lock'`);
				if (rows[0].n > 0) break;
				await new Promise((r) => setTimeout(r, 50));
			}
			await other.query('commit');
			const err = await pending;
			expect(err).toBeInstanceOf(CycleRunError);
			expect((err as Error).message).toMatch(/is released/);
			expect(await t.handle.db.select().from(cycleRun).where(eq(cycleRun.batchId, batchId))).toHaveLength(0);
		} finally {
			await other.end();
		}
	});
});

describe.each(databaseKinds)('the series SHA-256 backfill of migration 0016 on %s', (kind) => {
	let dir: string;
	beforeAll(() => {
		// The migrations up to 0015 (the column), so a run can be stored the way it was before 0016.
		dir = mkdtempSync(join(tmpdir(), 'rimebook-migrations-'));
		cpSync('drizzle', dir, { recursive: true });
		const journalPath = join(dir, 'meta', '_journal.json');
		const journal = JSON.parse(readFileSync(journalPath, 'utf8')) as { entries: { tag: string }[] };
		const last = journal.entries.findIndex((e) => e.tag === '0015_cycle_run_series_sha256');
		journal.entries = journal.entries.slice(0, last + 1);
		writeFileSync(journalPath, JSON.stringify(journal));
	});
	afterAll(async () => {
		await t?.dispose();
		rmSync(dir, { recursive: true, force: true });
	});

	it('gives a run stored without the hash the hash of its stored series', async () => {
		t = await createTestDatabase(kind, { migrate: false });
		await t.handle.migrate(dir);
		// Today's services append through migration 0023's ledger function; it only needs the
		// audit_event table of 0010, and 0023 itself is CREATE OR REPLACE when it runs below.
		await t.handle.db.execute(sql.raw(readFileSync(join('drizzle', '0023_ledger_append_text.sql'), 'utf8')));
		const actor = await createTestActor(t.handle.db);
		const { dryer } = await createTestDryer(t.handle.db, actor);
		const { runId } = await importRun(t.handle.db, actor, { equipmentId: dryer.id, recipe, batchId: null, stepKey: null }, upload());
		await t.handle.db.update(cycleRun).set({ seriesSha256: null }).where(eq(cycleRun.id, runId)); // as imported before 0015
		await t.handle.migrate('drizzle');
		const [row] = await t.handle.db.select({ seriesSha256: cycleRun.seriesSha256 }).from(cycleRun).where(eq(cycleRun.id, runId));
		expect(row.seriesSha256).toBe(hashSeries((await loadSeries(t.handle.db, runId))!));
	});
});
