import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { eq } from 'drizzle-orm';
import { auditEvent } from '$lib/server/db/schema';
import { ensureSigningKey } from '$lib/server/audit/checkpoint';
import { localBlobStore } from '$lib/server/blobs/store';
import { ConfigError } from '$lib/server/config';
import { parseBackupConfig, runScheduledBackup, listBackups } from '$lib/server/backup';
import { takenAt } from '$lib/server/backup/schedule';
import { databaseKinds, createTestDatabase, type TestDatabase } from '../support/databases';

// EU GMP Annex 11 §7.2: "Regular back-ups of all relevant data should be done."
describe.each(databaseKinds)('scheduled backups on %s', (kind) => {
	let t: TestDatabase;
	const dir = mkdtempSync(join(tmpdir(), 'rimebook-backup-schedule-'));
	const store = localBlobStore(join(dir, 'blobs'));
	beforeAll(async () => {
		t = await createTestDatabase(kind);
		await ensureSigningKey(t.handle.db);
	});
	afterAll(async () => {
		await t?.dispose();
		rmSync(dir, { recursive: true, force: true });
	});

	test('a backup is taken when the newest is older than the interval, and only the newest N are kept (audited)', async () => {
		const out = join(dir, 'out');
		const config = parseBackupConfig({ RIMEBOOK_BACKUP_DIR: out, RIMEBOOK_BACKUP_INTERVAL_HOURS: '24', RIMEBOOK_BACKUP_KEEP: '2' });
		const t0 = new Date('2026-12-01T02:00:00.000Z');
		const hours = (h: number) => new Date(t0.getTime() + h * 3_600_000);
		const run = (now: Date) => runScheduledBackup(t.handle, { config, store, migrationsFolder: 'drizzle', now });
		expect(await run(t0)).toMatch(/rimebook-backup-20261201T020000000Z\.tar$/);
		expect(await run(hours(23))).toBeNull();
		expect(await run(hours(24))).toMatch(/20261202T020000000Z/);
		expect(await run(hours(48))).toMatch(/20261203T020000000Z/);
		expect(readdirSync(out).filter((n) => n.endsWith('.tar')).sort()).toEqual(['rimebook-backup-20261202T020000000Z.tar', 'rimebook-backup-20261203T020000000Z.tar']);
		const pruned = await t.handle.db.select().from(auditEvent).where(eq(auditEvent.action, 'backup.prune'));
		expect(pruned.map((e) => e.after)).toEqual([{ removed: ['rimebook-backup-20261201T020000000Z.tar'], keep: 2 }]);
		const listed = await listBackups(out);
		expect(listed.map((b) => b.status)).toEqual(['good', 'good']);
		expect(takenAt(listed[0].name)).toBe(hours(48).getTime());
	});

	test('the backup settings are validated with the variable named', () => {
		expect(parseBackupConfig({})).toEqual({ RIMEBOOK_BACKUP_INTERVAL_HOURS: 24, RIMEBOOK_BACKUP_KEEP: 14 });
		expect(() => parseBackupConfig({ RIMEBOOK_BACKUP_KEEP: '0' })).toThrow(ConfigError);
		expect(() => parseBackupConfig({ RIMEBOOK_BACKUP_INTERVAL_HOURS: 'daily' })).toThrow(/RIMEBOOK_BACKUP_INTERVAL_HOURS must be a number of hours/);
	});
});
