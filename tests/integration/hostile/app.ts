import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { randomBytes } from 'node:crypto';
import pg from 'pg';
import { vi } from 'vitest';
import { is, sql } from 'drizzle-orm';
import { PgTable, getTableConfig } from 'drizzle-orm/pg-core';
import { roles, type Role } from '$lib/domain/permissions';
import type { SessionInfo, SessionUser } from '$lib/server/auth/types';
import type { Database, DatabaseHandle } from '$lib/server/db/client';

/**
 * The app itself, in this process, on a fresh database of the given kind: the database singleton
 * (`$lib/server/db`) is re-imported after the environment points it at a throw-away PGlite
 * folder or a throw-away PostgreSQL database, migrated and seeded with the invented demo, the
 * same start-up path as `node build` (src/lib/server/startup.ts).
 */
export interface App {
	kind: 'pglite' | 'postgresql';
	db: Database;
	people: Map<Role, { user: SessionUser; session: SessionInfo }>;
	ids: Record<string, string[]>;
	/** A fingerprint of every GMP table and of the audit trail; equal before and after means nothing was written. */
	fingerprint(): Promise<Record<string, string>>;
	close(): Promise<void>;
}

/**
 * Rows a refused request may legitimately write: the security log of failed or refused sign-ins
 * and signatures and the lock they lead to (21 CFR 11.300(d): attempts at unauthorised use are
 * recorded; NIST SP 800-63B-4 §3.2.2 rate limiting), short-lived WebAuthn challenges and
 * sessions. Nothing else — no GMP record, no other audit event — may change.
 */
const SECURITY_TABLES = new Set(['session', 'sign_in_attempt', 'webauthn_challenge']);
const SECURITY_ACTIONS = ['signature.credentials-failed', 'auth.sign-in-failed', 'signature.refused', 'auth.sign-in-refused', 'user.lock'];
/** Columns a lock, a sign-in or a token use touches; bulky JSON columns and the audit event's canonical text (its hash covers it) are left to the row count and the other columns. */
const VOLATILE_COLUMNS = new Set(['locked_until', 'last_used_at', 'last_seen_at', 'canonical']);

export async function startApp(kind: 'pglite' | 'postgresql'): Promise<App> {
	let dropDatabase = async () => {};
	if (kind === 'pglite') {
		process.env.RIMEBOOK_DATA_DIR = mkdtempSync(join(tmpdir(), 'rimebook-hostile-'));
		delete process.env.DATABASE_URL;
	} else {
		const base = process.env.DATABASE_URL_TEST!;
		const name = `rimebook_hostile_${randomBytes(6).toString('hex')}`;
		const admin = new pg.Client({ connectionString: base });
		await admin.connect();
		await admin.query(`create database ${name}`);
		await admin.end();
		const url = new URL(base);
		url.pathname = `/${name}`;
		process.env.DATABASE_URL = url.toString();
		dropDatabase = async () => {
			const c = new pg.Client({ connectionString: base });
			await c.connect();
			await c.query(`drop database if exists ${name} with (force)`);
			await c.end();
		};
	}
	process.env.RIMEBOOK_SEED = 'demo';
	// Hostile signatures fail by the hundred; a high limit keeps the demo people usable so later
	// runs still reach the code behind the signature (the lockout itself is tested in auth/).
	process.env.RIMEBOOK_LOCKOUT_ATTEMPTS = '100';
	process.env.RIMEBOOK_LOCKOUT_WINDOW_MINUTES = '1';
	vi.resetModules();
	const { database } = (await import('$lib/server/db')) as { database: DatabaseHandle };
	const { prepareDatabase } = await import('$lib/server/startup');
	const { ensureSigningKey } = await import('$lib/server/audit/checkpoint');
	const { createUserSession, validateSessionToken, rolesOf } = await import('$lib/server/auth/session');
	const schema = await import('$lib/server/db/schema');
	await prepareDatabase(database);
	await ensureSigningKey(database.db);
	const db = database.db;
	// Site secrets made on first use (not GMP data) exist before the first fingerprint, as on a running site.
	const { loadPseudonymKey } = await import('$lib/server/auth/pseudonym');
	await loadPseudonymKey(db);

	const people = new Map<Role, { user: SessionUser; session: SessionInfo }>();
	const demo: Record<Role, string> = { author: 'author', operator: 'operator', supervisor: 'supervisor', qa: 'qa', inspector: 'inspector', admin: 'admin' };
	for (const role of roles) {
		const rows = await db.execute<{ id: string }>(sql`select id from "user" where username = ${demo[role]}`);
		const id = rowsOf<{ id: string }>(rows)[0].id;
		if (!(await rolesOf(db, id)).includes(role)) throw new Error(`demo user ${demo[role]} lacks ${role}`);
		const { token } = await createUserSession(db, id, 'password');
		const v = await validateSessionToken(db, token);
		if ('end' in v) throw new Error('no session');
		people.set(role, { user: v.user, session: v.session });
	}

	const tables = Object.values(schema as Record<string, unknown>)
		.filter((t): t is PgTable => is(t, PgTable))
		.map((t) => getTableConfig(t));
	const ids: Record<string, string[]> = {};
	for (const t of tables) {
		const key = t.columns.find((c) => c.name === 'id') ? 'id' : t.columns.find((c) => c.name === 'seq') ? 'seq' : null;
		if (!key) continue;
		ids[t.name] = rowsOf<{ k: string }>(await db.execute<{ k: string }>(sql.raw(`select "${key}"::text as k from "${t.name}" order by 1 limit 5`))).map((r) => r.k);
	}
	ids.step_key = rowsOf<{ k: string }>(await db.execute<{ k: string }>(sql`select distinct step_key as k from step_entry order by 1 limit 8`)).map((r) => r.k);

	const parts = tables
		.filter((t) => !SECURITY_TABLES.has(t.name))
		.map((t) => {
			const cols = t.columns.filter((c) => !VOLATILE_COLUMNS.has(c.name) && !['PgJsonb', 'PgJson', 'PgCustomColumn'].includes(c.columnType)).map((c) => `"${c.name}"`);
			const where = t.name === 'audit_event' ? ` where action not in (${SECURITY_ACTIONS.map((a) => `'${a}'`).join(',')})` : '';
			return `(select count(*)::text || ':' || coalesce(md5(string_agg(r::text, '|' order by r::text)), '') from (select ${cols.join(', ')} from "${t.name}"${where}) r) as "${t.name}"`;
		});
	const fingerprintSql = sql.raw(`select ${parts.join(', ')}`);

	return {
		kind,
		db,
		people,
		ids,
		async fingerprint() {
			return rowsOf<Record<string, string>>(await db.execute<Record<string, string>>(fingerprintSql))[0];
		},
		async close() {
			await database.close();
			await dropDatabase();
		}
	};
}

function rowsOf<T>(result: unknown): T[] {
	return (Array.isArray(result) ? result : (result as { rows: T[] }).rows) as T[];
}
