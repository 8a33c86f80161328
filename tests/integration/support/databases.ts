import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { randomBytes } from 'node:crypto';
import pg from 'pg';
import { openDatabase, type DatabaseHandle } from '$lib/server/db/client';

/**
 * The databases every integration test runs on: real PGlite in a temporary folder, and — in the
 * same run — a real PostgreSQL server when DATABASE_URL_TEST points at one (a fresh database is
 * created per call and dropped afterwards). `npm test` sets DATABASE_URL_TEST up or fails.
 */
export const databaseKinds: ('pglite' | 'postgresql')[] = process.env.DATABASE_URL_TEST ? ['pglite', 'postgresql'] : ['pglite'];

export interface TestDatabase {
	handle: DatabaseHandle;
	/** Superuser connection URL (PostgreSQL only), for tests that play an attacker with database access. */
	url?: string;
	dispose(): Promise<void>;
}

export async function createTestDatabase(kind: 'pglite' | 'postgresql', options: { migrate?: boolean } = {}): Promise<TestDatabase> {
	const migrate = options.migrate ?? true;
	if (kind === 'pglite') {
		const dir = mkdtempSync(join(tmpdir(), 'rimebook-test-'));
		const handle = openDatabase({ dataDir: dir });
		await handle.connect();
		if (migrate) await handle.migrate('drizzle');
		return {
			handle,
			async dispose() {
				await handle.close();
				rmSync(dir, { recursive: true, force: true });
			}
		};
	}
	const base = process.env.DATABASE_URL_TEST;
	if (!base) throw new Error('DATABASE_URL_TEST is not set');
	const name = `rimebook_test_${randomBytes(6).toString('hex')}`;
	const admin = new pg.Client({ connectionString: base });
	await admin.connect();
	await admin.query(`create database ${name}`);
	await admin.end();
	const url = new URL(base);
	url.pathname = `/${name}`;
	const handle = openDatabase({ dataDir: '', databaseUrl: url.toString() });
	await handle.connect();
	if (migrate) await handle.migrate('drizzle');
	return {
		handle,
		url: url.toString(),
		async dispose() {
			await handle.close();
			const drop = new pg.Client({ connectionString: base });
			await drop.connect();
			// pool.end() resolves before its sockets have closed: wait for the backends to go, so the
			// forced drop below terminates nobody a test still holds (that would surface as an
			// uncaught "terminating connection" error in whichever test runs next).
			for (let i = 0; i < 50; i++) {
				const { rows } = await drop.query('select count(*)::int as n from pg_stat_activity where datname = $1', [name]);
				if (rows[0].n === 0) break;
				await new Promise((r) => setTimeout(r, 100));
			}
			await drop.query(`drop database if exists ${name} with (force)`);
			await drop.end();
		}
	};
}
