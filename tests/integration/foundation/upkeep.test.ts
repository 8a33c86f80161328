import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { sql } from 'drizzle-orm';
import { isTableDue, readTableSizes, runUpkeep, startUpkeepSchedule, stopUpkeepSchedule } from '$lib/server/db/upkeep';
import { runUnitOfWork } from '$lib/server/work';
import { rowsOf, systemActor } from '$lib/server/audit/ledger';
import { setting } from '$lib/server/db/schema';
import { createTestDatabase, databaseKinds, type TestDatabase } from '../support/databases';

describe.each(databaseKinds)('database upkeep on %s', (kind) => {
	let t: TestDatabase;
	beforeAll(async () => {
		t = await createTestDatabase(kind);
		// On a server, autovacuum could analyse these tables first and make "due" untrue; this
		// throw-away database leaves that to the code under test.
		if (kind === 'postgresql') await t.handle.db.execute(sql`alter table setting set (autovacuum_enabled = false); alter table audit_event set (autovacuum_enabled = false)`);
	});
	afterAll(async () => t?.dispose());

	it('finds the tables written since their last analysis, analyses them, and then they are not due', async () => {
		// 3,000 audited writes: a setting each and its ledger event, as the app writes them.
		for (let i = 0; i < 30; i++) {
			await runUnitOfWork(t.handle.db, systemActor, async (uow) => {
				await uow.tx.insert(setting).values(Array.from({ length: 100 }, (_, j) => ({ key: `upkeep.${i}.${j}`, value: { i, j } })));
				await uow.audit({ action: 'setting.create', entityType: 'setting', entityId: `upkeep.${i}`, after: { rows: 100 } });
			});
		}
		const before = new Map((await readTableSizes(t.handle.db)).map((s) => [s.table, s]));
		expect(before.get('setting')!.pages).toBeGreaterThan(0);
		expect(isTableDue(before.get('setting')!)).toBe(true);

		const report = await runUpkeep(t.handle.db);
		expect(report.tables).toContain('setting');
		expect(report.tables).toContain('audit_event');

		const after = new Map((await readTableSizes(t.handle.db)).map((s) => [s.table, s]));
		const [{ n }] = rowsOf<{ n: number }>(await t.handle.db.execute(sql`select count(*)::int as n from setting`));
		// A small table is analysed whole, so the catalogue's count is exact.
		expect(after.get('setting')!.reltuples).toBe(n);
		expect(after.get('setting')!.relpages).toBe(after.get('setting')!.pages);
		expect(isTableDue(after.get('setting')!)).toBe(false);
		// Nothing is due straight after: a second run does nothing.
		expect((await runUpkeep(t.handle.db)).tables).toEqual([]);
	});

	it('vacuums only the named tables that exist when asked', async () => {
		const report = await runUpkeep(t.handle.db, { tables: ['setting', 'no_such_table'] });
		expect(report.tables).toEqual(['setting']);
	});

	it('runs its own schedule only on PGlite (a PostgreSQL server has autovacuum)', async () => {
		const started = startUpkeepSchedule(t.handle, { checkMinutes: 60, firstAfterSeconds: 3600 });
		expect(started).toBe(kind === 'pglite');
		await stopUpkeepSchedule(t.handle);
	});
});
