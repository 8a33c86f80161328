import { createHash } from 'node:crypto';
import { existsSync } from 'node:fs';
import { mkdir, mkdtemp, readdir, rename, rm, rmdir, stat } from 'node:fs/promises';
import { basename, dirname, join, resolve } from 'node:path';
import { sql } from 'drizzle-orm';
import { readMigrationFiles } from 'drizzle-orm/migrator';
import { openDatabase, type DatabaseHandle, type Tx } from '../db/client';
import { appendEvent, type Actor } from '../audit/ledger';
import { keyIdOf } from '../audit/checkpoint';
import { verifyChain } from '../audit/verify';
import { runUpkeep } from '../db/upkeep';
import { queryRows } from '../audit/rows';
import { localBlobStore, type BlobStore } from '../blobs/store';
import { isDatabaseEmpty, listTables, quoteIdent } from './catalog';
import { BackupRefusedError } from './errors';
import type { BlobPart, Manifest, TablePart } from './manifest';
import { applyPortableSettings, loadTable } from './rows';
import { readEntry, streamEntry } from './tar';
import { checkBackupFile, type CheckedBackup } from './verify';

/**
 * Restores a backup into an EMPTY target only (Annex 11 §7.2: restore tested; 21 CFR 11.10(c)):
 *   1. the file: complete archive, manifest signature, every part's size and SHA-256 — before
 *      anything is written;
 *   2. one transaction: this release's migrations up to the backup's migration head, every table in
 *      foreign-key order, sequences, then any later migrations of this release (an upgrade);
 *      every blob re-hashed into the blob store;
 *   3. in that same transaction: the whole audit chain recomputed with node:crypto (verifyChain,
 *      app engine, Merkle roots of every checkpoint), its head equal to the manifest's, the
 *      manifest's checkpoint and signing key present; a `backup.restore` event appended;
 *   4. commit. On PGlite the database is built in a staging folder beside the target and renamed
 *      into place only after the commit, so a failure at any step leaves the target as it was.
 *
 * The append-only triggers (migrations 0003, 0009, 0016) reject UPDATE, DELETE and TRUNCATE only;
 * plain INSERTs load, so no trigger is disabled and session_replication_role stays as it is: the
 * foreign keys are checked on every row (immediately, per statement) as in normal operation.
 */
export type RestoreTarget =
	/** A data folder (empty); blobs go to its blobs/ folder unless another store (S3) is given. */
	| { kind: 'pglite'; dataDir: string; blobs?: BlobStore }
	/** A PostgreSQL database (empty) and the blob store the site will use; `blobDir` when it is a local folder (checked empty). */
	| { kind: 'postgresql'; url: string; blobs: BlobStore; blobDir?: string };

export interface RestoreOptions {
	migrationsFolder: string;
	actor: Actor;
	/** Key ids the manifest may be signed with (the site's known checkpoint key); unset: any key that the backup itself holds. */
	trustedKeyIds?: readonly string[];
	onProgress?: (step: string) => void;
}

export interface RestoreReport {
	file: string;
	manifestSha256: string;
	createdAt: string;
	tables: number;
	rows: number;
	blobs: number;
	/** The ledger head the backup vouched for, found again after the load. */
	head: { seq: number; hash: string };
	/** The restore's own audit event. */
	restoreEvent: { seq: number; hash: string };
	migrationsApplied: number;
}

export async function restoreBackup(file: string, target: RestoreTarget, options: RestoreOptions): Promise<RestoreReport> {
	const progress = options.onProgress ?? (() => undefined);
	progress('checking the file');
	const checked = await checkBackupFile(file, { trustedKeyIds: options.trustedKeyIds, deep: true });
	if (target.kind === 'pglite') return restoreIntoFolder(file, checked, resolve(target.dataDir), target.blobs, options);
	if (target.blobDir && !(await isFolderEmpty(target.blobDir))) {
		throw new BackupRefusedError('target', 'not-empty', `The blob folder ${target.blobDir} is not empty; restore goes into an empty one only.`);
	}
	const handle = openDatabase({ dataDir: '', databaseUrl: target.url });
	try {
		await handle.connect();
		const { empty, found } = await isDatabaseEmpty(handle.db);
		if (!empty) throw new BackupRefusedError('target', 'not-empty', `The target database is not empty (it holds ${found.join(', ')}…); restore goes into an empty database only.`);
		return await loadAll(handle, file, checked, target.blobs, options);
	} finally {
		await handle.close();
	}
}

async function isFolderEmpty(dir: string): Promise<boolean> {
	if (!existsSync(dir)) return true;
	if (!(await stat(dir)).isDirectory()) return false;
	return (await readdir(dir)).length === 0;
}

async function restoreIntoFolder(file: string, checked: CheckedBackup, dataDir: string, blobs: BlobStore | undefined, options: RestoreOptions): Promise<RestoreReport> {
	if (!(await isFolderEmpty(dataDir))) throw new BackupRefusedError('target', 'not-empty', `The data folder ${dataDir} is not empty; restore goes into an empty or new folder only.`);
	await mkdir(dirname(dataDir), { recursive: true });
	const staging = await mkdtemp(join(dirname(dataDir), `.${basename(dataDir)}.restoring-`));
	const handle = openDatabase({ dataDir: staging });
	try {
		await handle.connect();
		const report = await loadAll(handle, file, checked, blobs ?? localBlobStore(join(staging, 'blobs')), options);
		await handle.close();
		if (existsSync(dataDir)) await rmdir(dataDir);
		await rename(staging, dataDir);
		return report;
	} catch (err) {
		await handle.close().catch(() => undefined);
		await rm(staging, { recursive: true, force: true });
		throw err;
	}
}

async function loadAll(handle: DatabaseHandle, file: string, checked: CheckedBackup, store: BlobStore, options: RestoreOptions): Promise<RestoreReport> {
	const { manifest, signature } = checked;
	const progress = options.onProgress ?? (() => undefined);
	const migrations = readMigrationFiles({ migrationsFolder: options.migrationsFolder });
	checkMigrations(manifest, migrations);
	const report = await handle.db.transaction(async (tx: Tx) => {
		await applyPortableSettings(tx);
		progress('applying migrations');
		await applyMigrations(tx, migrations.slice(0, manifest.migrations.length));
		const tables = await listTables(tx);
		const parts = new Map(manifest.parts.filter((p): p is TablePart => p.kind === 'table').map((p) => [p.table, p]));
		for (const t of tables) if (!parts.has(t.name)) throw new BackupRefusedError(MANIFEST, 'manifest', `The backup has no part for table ${t.name}, which the schema at its migration head has.`);
		for (const p of parts.values()) if (!tables.some((t) => t.name === p.table)) throw new BackupRefusedError(p.name, 'manifest', `Part ${p.name} is for a table ${p.table} that the schema at the backup's migration head does not have.`);
		let rows = 0;
		for (const table of tables) {
			const part = parts.get(table.name)!;
			if (part.columns.join(',') !== table.columns.join(',')) throw new BackupRefusedError(part.name, 'manifest', `Part ${part.name} has the columns (${part.columns.join(', ')}), the schema has (${table.columns.join(', ')}).`);
			progress(`loading ${table.name}`);
			const loaded = await loadTable(tx, table, streamEntry(file, checked.entries.get(part.name)!));
			if (loaded.sha256 !== part.sha256) throw new BackupRefusedError(part.name, 'sha256-mismatch', `Part ${part.name} changed while it was loaded (SHA-256 ${loaded.sha256}, the manifest says ${part.sha256}).`);
			if (loaded.rows !== part.rows) throw new BackupRefusedError(part.name, 'count-mismatch', `Part ${part.name} holds ${loaded.rows} rows; the manifest says ${part.rows}.`);
			rows += loaded.rows;
		}
		for (const s of manifest.sequences) await queryRows(tx, 'select pg_catalog.setval($1::regclass, $2::bigint, $3)', [quoteIdent(s.name), s.lastValue, s.isCalled]);
		const later = migrations.slice(manifest.migrations.length);
		if (later.length > 0) {
			progress(`applying ${later.length} later migrations`);
			await applyMigrations(tx, later);
		}
		const blobParts = manifest.parts.filter((p): p is BlobPart => p.kind === 'blob');
		await checkBlobRows(tx, blobParts);
		progress('verifying the audit chain');
		await checkLedger(tx, manifest, signature.keyId, signature.publicKey);
		const event = await appendEvent(tx, options.actor, {
			action: 'backup.restore',
			entityType: 'backup',
			entityId: basename(file),
			after: { file: basename(file), manifestSha256: checked.manifestSha256, createdAt: manifest.createdAt, head: manifest.ledger.head, counts: manifest.counts, keyId: signature.keyId, laterMigrations: later.length }
		});
		// Last before the commit: blobs are content-addressed, so one written by a restore that then
		// fails is inert (no row names it) and a retry reuses it.
		progress('restoring blobs');
		await restoreBlobs(file, checked, blobParts, store);
		return {
			file,
			manifestSha256: checked.manifestSha256,
			createdAt: manifest.createdAt,
			tables: tables.length,
			rows,
			blobs: blobParts.length,
			head: manifest.ledger.head,
			restoreEvent: { seq: event.seq, hash: event.hash },
			migrationsApplied: migrations.length
		};
	});
	// After the commit, as PostgreSQL's documentation advises after any restore (pg_restore: "run
	// ANALYZE on each restored table so the optimizer has useful statistics"): VACUUM (ANALYZE) of
	// every table also sets the hint bits of the bulk-loaded rows once, so the first verification or
	// trail query after a restore does not pay for it. The restore has committed by now; a failure
	// here is reported but does not undo it.
	progress('analysing the restored tables');
	await runUpkeep(handle.db, { all: true }).catch((err) => console.error('[restore] VACUUM (ANALYZE) after the restore failed:', err instanceof Error ? err.message : err));
	return report;
}

const MANIFEST = 'manifest.json';

type MigrationFile = ReturnType<typeof readMigrationFiles>[number];

/** The backup's migrations must be this release's first migrations, byte for byte (their SHA-256). */
function checkMigrations(manifest: Manifest, files: MigrationFile[]) {
	if (manifest.migrations.length > files.length) {
		throw new BackupRefusedError(MANIFEST, 'migrations', `The backup was made at migration ${manifest.migrationHead?.tag ?? manifest.migrations.length}, which this release (${files.length} migrations) does not have: restore it with the release that made it or a later one.`);
	}
	manifest.migrations.forEach((m, i) => {
		if (files[i].hash !== m.hash || files[i].folderMillis !== m.when) {
			throw new BackupRefusedError(MANIFEST, 'migrations', `Migration ${i + 1} (${m.tag ?? m.when}) of the backup differs from this release's (SHA-256 ${files[i].hash}); the schema would not be the one the data was written in.`);
		}
	});
}

/** What drizzle's migrator does (pg-core dialect), inside the caller's transaction. */
async function applyMigrations(tx: Tx, files: MigrationFile[]) {
	await tx.execute(sql`create schema if not exists "drizzle"`);
	await tx.execute(sql`create table if not exists "drizzle"."__drizzle_migrations" (id serial primary key, hash text not null, created_at bigint)`);
	for (const m of files) {
		for (const statement of m.sql) await tx.execute(sql.raw(statement));
		await tx.execute(sql`insert into "drizzle"."__drizzle_migrations" ("hash", "created_at") values (${m.hash}, ${m.folderMillis})`);
	}
}

/** The blobs the restored database records are exactly the blobs the backup holds. */
async function checkBlobRows(tx: Tx, parts: BlobPart[]) {
	const rows = new Set((await queryRows<[string]>(tx, 'select sha256 from blob', [])).map(([s]) => s));
	for (const part of parts) {
		if (!rows.delete(part.sha256)) throw new BackupRefusedError(part.name, 'manifest', `Part ${part.name} is a blob the restored database does not record.`);
	}
	const [missing] = rows;
	if (missing) throw new BackupRefusedError(`blobs/${missing}`, 'missing', `The restored database records blob ${missing}, but the backup does not hold it (${rows.size} missing).`);
}

async function restoreBlobs(file: string, checked: CheckedBackup, parts: BlobPart[], store: BlobStore) {
	for (const part of parts) {
		const bytes = await readEntry(file, checked.entries.get(part.name)!);
		const sha = createHash('sha256').update(bytes).digest('hex');
		if (sha !== part.sha256) throw new BackupRefusedError(part.name, 'sha256-mismatch', `Part ${part.name} changed while it was restored (SHA-256 ${sha}).`);
		await store.put(sha, bytes, part.contentType);
	}
}

async function checkLedger(tx: Tx, manifest: Manifest, keyId: string, publicKey: string) {
	const report = await verifyChain(tx, { engine: 'app', roots: true });
	if (!report.ok) {
		const b = report.firstBreak!;
		throw new BackupRefusedError('audit chain', 'chain', `The restored audit chain does not verify: first break at seq ${b.seq} (${b.kind}, ${b.reason}).`);
	}
	const want = manifest.ledger.head;
	if (report.head.seq !== want.seq || report.head.hash !== want.hash) {
		throw new BackupRefusedError('audit chain', 'head-mismatch', `The restored chain ends at seq ${report.head.seq} ${report.head.hash}; the manifest says seq ${want.seq} ${want.hash}.`);
	}
	const cp = manifest.ledger.checkpoint;
	if (cp) {
		const [row] = await queryRows<[string, string]>(tx, 'select statement, signature from audit_checkpoint where size = $1', [cp.size]);
		if (!row || row[0] !== cp.statement || row[1] !== cp.signature) throw new BackupRefusedError('audit chain', 'head-mismatch', `The manifest's signed checkpoint at size ${cp.size} is not among the restored checkpoints.`);
	}
	// The manifest must be signed by a key the restored site holds (the same one its checkpoints use).
	const keys = await queryRows<[string]>(tx, 'select public_key from audit_signing_key', []);
	if (!keys.some(([pem]) => keyIdOf(pem) === keyId && pem.trim() === publicKey.trim())) {
		throw new BackupRefusedError('manifest.sig', 'untrusted-key', `The manifest is signed with key ${keyId}, which the restored site does not hold.`);
	}
}
