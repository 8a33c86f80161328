import { createReadStream, createWriteStream, type WriteStream } from 'node:fs';
import { mkdir, mkdtemp, open, rename, rm, stat } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import { desc } from 'drizzle-orm';
import type { Database, DatabaseKind, Tx } from '../db/client';
import { auditSigningKey, blob } from '../db/schema';
import { runUnitOfWork } from '../work';
import type { Actor } from '../audit/ledger';
import { createCheckpoint, getLatestCheckpoint, keyIdOf } from '../audit/checkpoint';
import { queryRows } from '../audit/rows';
import type { BlobStore } from '../blobs/store';
import { appVersion } from '../version';
import { appliedMigrations, listTables, readSequences } from './catalog';
import { MANIFEST_NAME, MANIFEST_TYPE, SIGNATURE_NAME, manifestBytes, sha256Hex, signManifest, type BlobPart, type Manifest, type TablePart } from './manifest';
import { applyPortableSettings, dumpTable } from './rows';
import { END_OF_ARCHIVE, padding, tarHeader } from './tar';

/**
 * Takes a backup (EU GMP Annex 11 §7.2; 21 CFR 11.10(c) "protection of records to enable their
 * accurate and ready retrieval"): one tar file in `outDir` holding every table of the database, every
 * blob, and the signed manifest. Audited: `backup.start` is appended first (so the backup itself
 * records who took it), a fresh checkpoint is signed over the ledger up to it, and `backup.complete`
 * (with the manifest's SHA-256) or `backup.fail` follows in the live ledger.
 *
 * Consistency: all tables are read in one REPEATABLE READ, READ ONLY transaction, so the dump is one
 * snapshot even while others write (on PGlite the single connection serialises them anyway). Blobs
 * are immutable and content-addressed, so they are read after it: every blob row of the snapshot
 * must be in the store with bytes that hash to its name, or the backup is refused.
 */
export interface BackupOptions {
	outDir: string;
	actor: Actor;
	/** How it was started, for the audit trail. */
	via: 'admin' | 'command' | 'schedule';
	migrationsFolder: string;
	now?: Date;
}

export interface BackupResult {
	file: string;
	bytes: number;
	manifestSha256: string;
	/** The id of the site key that signed the manifest. */
	keyId: string;
	manifest: Manifest;
}

export const BACKUP_FILE = /^rimebook-backup-\d{8}T\d{6}\d{3}Z\.tar$/;

export function backupFileName(at: Date): string {
	const iso = at.toISOString(); // 2026-12-02T00:41:26.123Z
	return `rimebook-backup-${iso.slice(0, 10).replace(/-/g, '')}T${iso.slice(11, 19).replace(/:/g, '')}${iso.slice(20, 23)}Z.tar`;
}

export async function createBackup(db: Database, kind: DatabaseKind, store: BlobStore, options: BackupOptions): Promise<BackupResult> {
	const outDir = resolve(options.outDir);
	await mkdir(outDir, { recursive: true });
	const name = backupFileName(options.now ?? new Date());
	await runUnitOfWork(db, options.actor, (uow) => uow.audit({ action: 'backup.start', entityType: 'backup', entityId: name, after: { file: name, via: options.via } }));
	try {
		await createCheckpoint(db);
		const result = await writeBackup(db, kind, store, outDir, name, options.migrationsFolder);
		await runUnitOfWork(db, options.actor, (uow) =>
			uow.audit({
				action: 'backup.complete',
				entityType: 'backup',
				entityId: name,
				after: { file: name, via: options.via, bytes: result.bytes, manifestSha256: result.manifestSha256, head: result.manifest.ledger.head, counts: result.manifest.counts }
			})
		);
		return result;
	} catch (err) {
		const reason = err instanceof Error ? err.message : String(err);
		await runUnitOfWork(db, options.actor, (uow) => uow.audit({ action: 'backup.fail', entityType: 'backup', entityId: name, after: { file: name, via: options.via }, reason: reason.slice(0, 1000) })).catch(() => undefined);
		throw err;
	}
}

interface Snapshot {
	tables: TablePart[];
	files: Map<string, string>;
	blobs: { sha256: string; contentType: string; size: number }[];
	sequences: Manifest['sequences'];
	migrations: Manifest['migrations'];
	head: { seq: number; hash: string };
	checkpoint: Manifest['ledger']['checkpoint'];
	key: { id: string; publicKey: string; privateKey: string };
	serverVersion: string;
}

async function readSnapshot(db: Database, work: string, migrationsFolder: string): Promise<Snapshot> {
	return db.transaction(
		async (tx: Tx) => {
			await applyPortableSettings(tx);
			const tables = await listTables(tx);
			const parts: TablePart[] = [];
			const files = new Map<string, string>();
			for (const [order, table] of tables.entries()) {
				const partName = `db/${table.name}.jsonl.gz`;
				const path = join(work, `${table.name}.jsonl.gz`);
				const dumped = await dumpTable(tx, table, path);
				parts.push({ kind: 'table', name: partName, table: table.name, columns: table.columns, order, ...dumped });
				files.set(partName, path);
			}
			const [[seq, hash]] = await queryRows<[string | number | null, string | null]>(tx, 'select seq, hash from audit_event order by seq desc limit 1', []);
			// Only the manifest signer reads the private key, inside the snapshot: the key that signs
			// is the site's newest, the same one createCheckpoint uses.
			const [key] = await tx.select().from(auditSigningKey).orderBy(desc(auditSigningKey.createdAt)).limit(1);
			if (!key) throw new Error('The site has no signing key; start Rimebook once (it creates one) before taking a backup.');
			const [[serverVersion]] = await queryRows<[string]>(tx, "select current_setting('server_version')", []);
			return {
				tables: parts,
				files,
				blobs: (await tx.select({ sha256: blob.sha256, contentType: blob.contentType, size: blob.size }).from(blob).orderBy(blob.sha256)).map((b) => ({ ...b, size: Number(b.size) })),
				sequences: await readSequences(tx),
				migrations: await appliedMigrations(tx, migrationsFolder),
				head: { seq: Number(seq ?? 0), hash: hash ?? '0'.repeat(64) },
				checkpoint: await getLatestCheckpoint(tx),
				key: { id: keyIdOf(key.publicKey), publicKey: key.publicKey, privateKey: key.privateKey },
				serverVersion
			};
		},
		{ isolationLevel: 'repeatable read', accessMode: 'read only' }
	);
}

async function writeBackup(db: Database, kind: DatabaseKind, store: BlobStore, outDir: string, name: string, migrationsFolder: string): Promise<BackupResult> {
	const work = await mkdtemp(join(outDir, '.rimebook-backup-'));
	const partial = join(outDir, `.${name}.partial`);
	try {
		const snap = await readSnapshot(db, work, migrationsFolder);
		const now = new Date();
		const out = createWriteStream(partial, { flags: 'wx' });
		const blobParts: BlobPart[] = [];
		for (const t of snap.tables) await appendFile(out, t.name, snap.files.get(t.name)!, t.bytes, now);
		for (const b of snap.blobs) {
			const bytes = await store.get(b.sha256);
			if (!bytes) throw new Error(`Blob ${b.sha256} is recorded in the database but missing from the ${store.kind} store; no backup was written. Find the file or record its loss before backing up.`);
			const sha = sha256Hex(bytes);
			if (sha !== b.sha256) throw new Error(`Blob ${b.sha256} in the ${store.kind} store has changed (its bytes hash to ${sha}); no backup was written.`);
			await appendBuffer(out, `blobs/${b.sha256}`, Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength), now);
			blobParts.push({ kind: 'blob', name: `blobs/${b.sha256}`, contentType: b.contentType, bytes: bytes.byteLength, sha256: sha });
		}
		const head = snap.migrations.at(-1) ?? null;
		const manifest: Manifest = {
			type: MANIFEST_TYPE,
			version: 1,
			createdAt: now.toISOString(),
			app: { name: 'rimebook', version: appVersion },
			source: { kind, serverVersion: snap.serverVersion },
			migrations: snap.migrations,
			migrationHead: head,
			sequences: snap.sequences,
			ledger: { head: snap.head, checkpoint: snap.checkpoint },
			counts: {
				tables: snap.tables.length,
				rows: snap.tables.reduce((n, t) => n + t.rows, 0),
				blobs: blobParts.length,
				blobBytes: blobParts.reduce((n, b) => n + b.bytes, 0)
			},
			parts: [...snap.tables, ...blobParts]
		};
		const bytes = manifestBytes(manifest);
		const signature = Buffer.from(JSON.stringify(signManifest(bytes, snap.key), null, 2) + '\n', 'utf8');
		// The manifest goes last: a file cut short loses it first, and is refused as truncated.
		await appendBuffer(out, MANIFEST_NAME, bytes, now);
		await appendBuffer(out, SIGNATURE_NAME, signature, now);
		await write(out, END_OF_ARCHIVE);
		await new Promise<void>((done, fail) => out.end((err?: Error | null) => (err ? fail(err) : done())));
		// Durable before it is named as a backup.
		const fh = await open(partial, 'r');
		await fh.sync();
		await fh.close();
		const file = join(outDir, name);
		await rename(partial, file);
		return { file, bytes: (await stat(file)).size, manifestSha256: sha256Hex(bytes), keyId: snap.key.id, manifest };
	} catch (err) {
		await rm(partial, { force: true });
		throw err;
	} finally {
		await rm(work, { recursive: true, force: true });
	}
}

function write(out: WriteStream, chunk: Buffer): Promise<void> {
	return new Promise((done, fail) => {
		const ok = out.write(chunk, (err) => (err ? fail(err) : undefined));
		if (ok) done();
		else out.once('drain', done);
	});
}

async function appendBuffer(out: WriteStream, name: string, bytes: Buffer, mtime: Date) {
	await write(out, tarHeader(name, bytes.length, mtime));
	await write(out, bytes);
	await write(out, padding(bytes.length));
}

async function appendFile(out: WriteStream, name: string, path: string, size: number, mtime: Date) {
	await write(out, tarHeader(name, size, mtime));
	let copied = 0;
	for await (const chunk of createReadStream(path, { highWaterMark: 1 << 20 }) as AsyncIterable<Buffer>) {
		await write(out, chunk);
		copied += chunk.length;
	}
	if (copied !== size) throw new Error(`Part ${name} changed size while it was written (${copied} of ${size} bytes).`);
	await write(out, padding(size));
}

