import { mkdirSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { PGlite } from '@electric-sql/pglite';
import pg from 'pg';
import type { ExtractTablesWithRelations } from 'drizzle-orm';
import type { PgDatabase, PgQueryResultHKT, PgTransaction } from 'drizzle-orm/pg-core';
import { drizzle as drizzlePglite } from 'drizzle-orm/pglite';
import { migrate as migratePglite } from 'drizzle-orm/pglite/migrator';
import { drizzle as drizzlePg } from 'drizzle-orm/node-postgres';
import { migrate as migratePg } from 'drizzle-orm/node-postgres/migrator';
import * as schema from './schema';

type Schema = typeof schema;
/** The database both drivers give: PGlite embedded, or a PostgreSQL server. Same schema and SQL. */
export type Database = PgDatabase<PgQueryResultHKT, Schema>;
/** A transaction inside `Database.transaction`. */
export type Tx = PgTransaction<PgQueryResultHKT, Schema, ExtractTablesWithRelations<Schema>>;
/** Anything that can run a query: the database or an open transaction. */
export type Executor = Database | Tx;
export type DatabaseKind = 'pglite' | 'postgresql';

export interface DatabaseHandle {
	db: Database;
	kind: DatabaseKind;
	/** Connects (and for PGlite opens the data folder); throws DatabaseError with the cause and the fix. */
	connect(): Promise<void>;
	/** Applies every pending migration in one transaction: all or nothing. */
	migrate(migrationsFolder: string): Promise<void>;
	close(): Promise<void>;
}

export class DatabaseError extends Error {
	constructor(message: string, options?: { cause?: unknown }) {
		super(message, options);
		this.name = 'DatabaseError';
	}
}

export interface DatabaseOptions {
	dataDir: string;
	databaseUrl?: string;
}

export function openDatabase(options: DatabaseOptions): DatabaseHandle {
	return options.databaseUrl ? openServer(options.databaseUrl) : openEmbedded(options.dataDir);
}

function openEmbedded(dataDir: string): DatabaseHandle {
	const folder = resolve(dataDir, 'pg');
	let client: PGlite | undefined;
	let db: Database | undefined;
	const handle: DatabaseHandle = {
		kind: 'pglite',
		get db() {
			if (!db) throw new DatabaseError('The database is not connected yet.');
			return db;
		},
		async connect() {
			if (client) return;
			try {
				// PGlite does not create parent folders itself.
				mkdirSync(dirname(folder), { recursive: true });
				const opened = await PGlite.create(folder);
				await opened.query('select 1');
				client = opened;
				db = drizzlePglite(opened, { schema }) as unknown as Database;
			} catch (cause) {
				throw new DatabaseError(
					`The data folder ${folder} cannot be opened as a Rimebook database (${describe(cause)}). ` +
						'Fix: point RIMEBOOK_DATA_DIR at an empty folder or a Rimebook data folder that is not damaged, ' +
						'or restore it from a backup.',
					{ cause }
				);
			}
		},
		async migrate(migrationsFolder) {
			await runMigration(() => migratePglite(handle.db as never, { migrationsFolder }), migrationsFolder);
		},
		async close() {
			const c = client;
			client = undefined;
			db = undefined;
			if (c && !c.closed) await c.close();
		}
	};
	return handle;
}

function openServer(url: string): DatabaseHandle {
	const pool = new pg.Pool({ connectionString: url, max: 10 });
	// An idle client that loses its connection must not crash the process.
	pool.on('error', (err) => console.error('[db] idle PostgreSQL client error:', err.message));
	// A client the pool is already closing has lost the pool's listener; a server that terminates
	// it then (restart, failover) must not crash the process either.
	pool.on('connect', (client) => client.on('error', (err) => console.error('[db] PostgreSQL connection error:', err.message)));
	const db = drizzlePg(pool, { schema }) as unknown as Database;
	const where = safeLocation(url);
	return {
		kind: 'postgresql',
		db,
		async connect() {
			try {
				await pool.query('select 1');
			} catch (cause) {
				throw new DatabaseError(explainServerError(cause, where), { cause });
			}
		},
		async migrate(migrationsFolder) {
			await runMigration(() => migratePg(db as never, { migrationsFolder }), migrationsFolder);
		},
		async close() {
			await pool.end();
		}
	};
}

async function runMigration(run: () => Promise<void>, folder: string) {
	try {
		await run();
	} catch (cause) {
		throw new DatabaseError(
			`A database migration from ${resolve(folder)} failed and was rolled back, so the database is unchanged ` +
				`(${describe(cause)}). Fix: make sure RIMEBOOK_MIGRATIONS_DIR holds this release's migrations and the ` +
				'database was made by this or an earlier Rimebook release.',
			{ cause }
		);
	}
}

function explainServerError(cause: unknown, where: string): string {
	const code = (cause as { code?: string })?.code;
	switch (code) {
		case 'ECONNREFUSED':
		case 'ENOTFOUND':
		case 'EHOSTUNREACH':
		case 'ETIMEDOUT':
			return `The PostgreSQL server at ${where} cannot be reached (${code}). Fix: start the server or correct the host and port in DATABASE_URL.`;
		case '28P01':
		case '28000':
			return `The PostgreSQL server at ${where} refused the user name or password (${code}). Fix: correct the credentials in DATABASE_URL.`;
		case '3D000':
			return `The database named in DATABASE_URL does not exist on ${where} (${code}). Fix: create it (createdb) or correct the name.`;
		default:
			return `The PostgreSQL server at ${where} could not be used (${describe(cause)}). Fix: check DATABASE_URL and the server's log.`;
	}
}

/** host:port/database of a URL, without the password. */
function safeLocation(url: string): string {
	try {
		const u = new URL(url);
		return `${u.hostname}:${u.port || '5432'}${u.pathname}`;
	} catch {
		return 'DATABASE_URL';
	}
}

export function describe(cause: unknown): string {
	if (cause instanceof Error) {
		const inner = (cause as { cause?: unknown }).cause;
		return inner instanceof Error ? `${cause.message}: ${inner.message}` : cause.message;
	}
	return String(cause);
}

/** The PostgreSQL error code of a failed query (drizzle 0.45 puts the driver error on `cause`). */
export function pgErrorCode(err: unknown): string | undefined {
	const e = err as { code?: string; cause?: { code?: string } };
	return e?.cause?.code ?? e?.code;
}
