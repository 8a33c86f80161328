import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { execFileSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, mkdtempSync, readdirSync, rmSync, writeFileSync, truncateSync, statSync, copyFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { eq } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { openDatabase } from '$lib/server/db/client';
import { auditEvent, batch } from '$lib/server/db/schema';
import { systemActor } from '$lib/server/audit/ledger';
import { readTableSizes, isTableDue } from '$lib/server/db/upkeep';
import { verifyChain } from '$lib/server/audit/verify';
import { uploadAttachment } from '$lib/server/batches/attachments';
import { loadBatchRecords, buildBatchView } from '$lib/server/batches/query';
import { localBlobStore } from '$lib/server/blobs/store';
import { createBackup, restoreBackup, BackupRefusedError, type BackupResult, type RestoreTarget } from '$lib/server/backup';
import { databaseKinds, createTestDatabase, type TestDatabase } from '../support/databases';
import { addFixtureInventory, insertBatch, personOf, seededDatabase } from '../batches/support';
import { gunzipLines, gzipLines, manifestOf, readArchive, relationCount, replacePart, siteKeyOf, strangerKey, tableTexts, writeArchive } from './support';

// EU GMP Annex 11 §7.2: "Regular back-ups of all relevant data should be done. Integrity and
// accuracy of backup data and the ability to restore the data should be checked during validation
// and monitored periodically." 21 CFR 11.10(c): protection of records to enable their accurate and
// ready retrieval throughout the records retention period.

// ISO 32000-1 7.5.2: a PDF starts with "%PDF-"; PNG signature from RFC 2083 (89 50 4E 47 0D 0A 1A 0A).
const pdf = new TextEncoder().encode('%PDF-1.7\n% invented test printout for the backup test\n%%EOF\n');
const png = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 1, 2, 3, 4, 0, 255]);
const migrationsFolder = 'drizzle';
const restorer = { id: null, name: 'Backup test (invented operator)' };

/** An empty target of the given kind; `isEmpty` tells whether it is still untouched. */
async function emptyTarget(kind: 'pglite' | 'postgresql', scratch: string): Promise<{ target: RestoreTarget; isEmpty(): Promise<boolean>; open(): Promise<{ db: Database; close(): Promise<void> }>; blobDir: string; dispose(): Promise<void> }> {
	const blobDir = join(mkdtempSync(join(scratch, 'target-')), 'blobs');
	if (kind === 'pglite') {
		const dataDir = join(blobDir, '..', 'data');
		return {
			target: { kind, dataDir },
			blobDir: join(dataDir, 'blobs'),
			async isEmpty() {
				return !existsSync(dataDir) && readdirSync(join(dataDir, '..')).length === 0;
			},
			async open() {
				const h = openDatabase({ dataDir });
				await h.connect();
				return { db: h.db, close: () => h.close() };
			},
			async dispose() {}
		};
	}
	const t = await createTestDatabase('postgresql', { migrate: false });
	return {
		target: { kind, url: t.url!, blobs: localBlobStore(blobDir), blobDir },
		blobDir,
		async isEmpty() {
			return (await relationCount(t.handle.db)) === 0 && !existsSync(blobDir);
		},
		async open() {
			return { db: t.handle.db, close: async () => undefined };
		},
		dispose: () => t.dispose()
	};
}

describe.each(databaseKinds)('backup and restore on %s', (kind) => {
	let source: TestDatabase;
	let db: Database;
	let backup: BackupResult;
	const scratch = mkdtempSync(join(tmpdir(), 'rimebook-backup-test-'));
	const sourceBlobs = localBlobStore(join(scratch, 'source-blobs'));
	const shas: string[] = [];

	beforeAll(async () => {
		source = await seededDatabase(kind);
		db = source.handle.db;
		await addFixtureInventory(db);
		const operator = await personOf(db, 'operator');
		const batchId = await insertBatch(db);
		for (const [filename, contentType, bytes] of [['printout.pdf', 'application/pdf', pdf], ['label.png', 'image/png', png]] as const) {
			const up = await uploadAttachment(db, sourceBlobs, { user: operator.user, batchId, stepKey: 'pre_use_test', filename, contentType, bytes });
			shas.push(up.sha256);
		}
		backup = await createBackup(db, source.handle.kind, sourceBlobs, { outDir: join(scratch, 'out'), actor: systemActor, via: 'command', migrationsFolder });
	});
	afterAll(async () => {
		await source?.dispose();
		rmSync(scratch, { recursive: true, force: true });
	});

	test('a backup is a standard tar with a signed manifest, and taking it is audited', async () => {
		// GNU tar as the reference reader of the POSIX ustar format (IEEE Std 1003.1).
		const listed = execFileSync('tar', ['-tf', backup.file], { encoding: 'utf8' }).trim().split('\n');
		expect(listed).toContain('manifest.json');
		expect(listed).toContain('manifest.sig');
		expect(listed).toContain('db/audit_event.jsonl.gz');
		for (const sha of shas) expect(listed).toContain(`blobs/${sha}`);
		const actions = (await db.select({ action: auditEvent.action }).from(auditEvent).where(eq(auditEvent.entityId, backup.file.split('/').at(-1)!))).map((r) => r.action);
		expect(actions).toEqual(['backup.start', 'backup.complete']);
		// The manifest's head is the backup.start event (the snapshot ends at or after it).
		const [start] = await db.select().from(auditEvent).where(eq(auditEvent.action, 'backup.start'));
		expect(backup.manifest.ledger.head.seq).toBeGreaterThanOrEqual(start.seq);
		// The fresh checkpoint signed at backup time covers it (and the key's creation if that came first).
		expect(backup.manifest.ledger.checkpoint!.size).toBeGreaterThanOrEqual(start.seq);
		expect(backup.manifest.ledger.checkpoint!.head).toEqual(backup.manifest.ledger.head);
	});

	test('the round trip is exact: every table, every blob byte, the chain and its head, and the batch signatures', async () => {
		const t = await emptyTarget(kind, scratch);
		try {
			const report = await restoreBackup(backup.file, t.target, { migrationsFolder, actor: restorer });
			expect(report.head).toEqual(backup.manifest.ledger.head);
			const restored = await t.open();
			try {
				const head = backup.manifest.ledger.head.seq;
				const want = await tableTexts(db, { maxAuditSeq: head });
				const got = await tableTexts(restored.db, { maxAuditSeq: head });
				expect([...got.keys()]).toEqual([...want.keys()]);
				for (const [table, rows] of want) expect({ table, rows: got.get(table) }).toEqual({ table, rows });
				// Exactly one event follows the backup's head: the restore itself.
				const after = await restored.db.select().from(auditEvent).where(eq(auditEvent.seq, head + 1));
				expect(after.map((e) => [e.action, e.prevHash])).toEqual([['backup.restore', backup.manifest.ledger.head.hash]]);
				expect(report.restoreEvent.seq).toBe(head + 1);
				// The restore analysed what it loaded (db/upkeep.ts; PGlite runs no autovacuum): the
				// catalogue's row count of the ledger is its real one, not -1 ("never analysed").
				const [ledger] = (await readTableSizes(restored.db)).filter((s) => s.table === 'audit_event');
				expect(ledger.reltuples).toBe(head + 1);
				expect(isTableDue(ledger)).toBe(false);
				// The whole chain recomputes with node:crypto SHA-256 (FIPS 180-4) and every checkpoint's
				// Ed25519 signature (RFC 8032) and Merkle root (RFC 9162 2.1) checks out.
				const chain = await verifyChain(restored.db, { engine: 'app', roots: true });
				expect(chain.ok).toBe(true);
				expect(chain.count).toBe(head + 1);
				// Blob bytes, read back through the store, equal the originals.
				const store = localBlobStore(t.blobDir);
				for (const [sha, bytes] of [[shas[0], pdf], [shas[1], png]] as const) {
					const back = await store.get(sha);
					expect(back && Buffer.from(back).equals(Buffer.from(bytes))).toBe(true);
					expect(createHash('sha256').update(back!).digest('hex')).toBe(sha);
				}
				// 21 CFR 11.70: every signature of every batch is still bound to the content it signed.
				const batches = await restored.db.select({ id: batch.id }).from(batch);
				let signed = 0;
				for (const b of batches) {
					const view = await buildBatchView(restored.db, (await loadBatchRecords(restored.db, b.id))!);
					expect({ batch: b.id, unbound: view.unboundSignatures }).toEqual({ batch: b.id, unbound: 0 });
					if (view.issueSignature) signed += 1;
				}
				expect(signed).toBeGreaterThan(0);
			} finally {
				await restored.close();
			}
		} finally {
			await t.dispose();
		}
	});

	test('restore refuses a target that is not empty and leaves it as it was', async () => {
		if (kind === 'pglite') {
			const dataDir = mkdtempSync(join(scratch, 'busy-'));
			writeFileSync(join(dataDir, 'keep.txt'), 'invented');
			const err = await restoreBackup(backup.file, { kind: 'pglite', dataDir }, { migrationsFolder, actor: restorer }).catch((e) => e);
			expect(err).toBeInstanceOf(BackupRefusedError);
			expect([err.part, err.kind]).toEqual(['target', 'not-empty']);
			expect(readdirSync(dataDir)).toEqual(['keep.txt']);
		} else {
			const before = await relationCount(db);
			const err = await restoreBackup(backup.file, { kind: 'postgresql', url: source.url!, blobs: localBlobStore(join(scratch, 'unused')) }, { migrationsFolder, actor: restorer }).catch((e) => e);
			expect(err).toBeInstanceOf(BackupRefusedError);
			expect([err.part, err.kind]).toEqual(['target', 'not-empty']);
			expect(err.message).toMatch(/not empty/);
			expect(await relationCount(db)).toBe(before);
		}
	});

	/** Restores a changed copy and expects a refusal naming the part and the mismatch, the target left empty. */
	async function expectRefused(file: string, want: { part: string | RegExp; kind: string; message: RegExp }, options: { trustedKeyIds?: string[] } = {}) {
		const t = await emptyTarget(kind, scratch);
		try {
			const err = await restoreBackup(file, t.target, { migrationsFolder, actor: restorer, ...options }).catch((e) => e);
			expect(err).toBeInstanceOf(BackupRefusedError);
			expect(err.kind).toBe(want.kind);
			if (typeof want.part === 'string') expect(err.part).toBe(want.part);
			else expect(err.part).toMatch(want.part);
			expect(err.message).toMatch(want.message);
			expect(await t.isEmpty()).toBe(true);
		} finally {
			await t.dispose();
		}
	}

	test('a tampered manifest is refused: its Ed25519 signature no longer verifies', async () => {
		const entries = await readArchive(backup.file);
		const m = manifestOf(entries);
		m.counts.rows += 1;
		const changed = entries.map((e) => (e.name === 'manifest.json' ? { name: e.name, bytes: Buffer.from(JSON.stringify(m)) } : e));
		const file = join(scratch, 'tampered-manifest.tar');
		writeArchive(file, changed);
		await expectRefused(file, { part: 'manifest.json', kind: 'signature', message: /signature of manifest\.json does not verify/ });
	});

	test('a tampered table part is refused by its SHA-256, naming the part', async () => {
		const file = join(scratch, 'tampered-table.tar');
		const entries = await readArchive(backup.file);
		const part = entries.find((e) => e.name === 'db/audit_event.jsonl.gz')!;
		part.bytes[Math.floor(part.bytes.length / 2)] ^= 0x01;
		writeArchive(file, entries);
		await expectRefused(file, { part: 'db/audit_event.jsonl.gz', kind: 'sha256-mismatch', message: /SHA-256 [0-9a-f]{64}; the manifest says [0-9a-f]{64}/ });
	});

	test('a truncated file is refused as truncated', async () => {
		const file = join(scratch, 'truncated.tar');
		copyFileSync(backup.file, file);
		truncateSync(file, Math.floor(statSync(file).size / 2));
		await expectRefused(file, { part: /./, kind: 'truncated', message: /truncated/ });
		// Cut only the end-of-archive marker: still refused.
		copyFileSync(backup.file, file);
		truncateSync(file, statSync(file).size - 1024);
		await expectRefused(file, { part: 'file', kind: 'truncated', message: /truncated/ });
	});

	test('a missing blob is refused, naming the blob', async () => {
		const file = join(scratch, 'missing-blob.tar');
		writeArchive(file, (await readArchive(backup.file)).filter((e) => e.name !== `blobs/${shas[1]}`));
		await expectRefused(file, { part: `blobs/${shas[1]}`, kind: 'missing', message: /listed in the manifest but missing/ });
	});

	test('a manifest re-signed with a key the site does not hold is refused', async () => {
		const entries = await readArchive(backup.file);
		const part = entries.find((e) => e.name === 'db/batch.jsonl.gz')!;
		const file = join(scratch, 'stranger.tar');
		writeArchive(file, replacePart(entries, part.name, part.bytes, strangerKey()));
		await expectRefused(file, { part: 'manifest.sig', kind: 'untrusted-key', message: /restored site does not hold/ });
		// With the site's key id pinned, it is refused before anything is loaded.
		await expectRefused(file, { part: 'manifest.sig', kind: 'untrusted-key', message: /not a key this site trusts/ }, { trustedKeyIds: [(await siteKeyOf(db)).id] });
	});

	test('an altered audit event is refused by the chain verification even when the manifest is re-signed with the site key', async () => {
		const entries = await readArchive(backup.file);
		const part = entries.find((e) => e.name === 'db/audit_event.jsonl.gz')!;
		const lines = gunzipLines(part.bytes);
		// Row 3's actor name changed inside its canonical text (an insider edit without re-hashing).
		const row = JSON.parse(lines[2]) as string;
		expect(row).toMatch(/actorName/);
		// (PostgreSQL's composite text doubles the quotes inside a quoted field.)
		lines[2] = JSON.stringify(row.replace(/""actorName"":""[^"]*""/, '""actorName"":""Someone Else""'));
		expect(lines[2]).not.toBe(JSON.stringify(row));
		const file = join(scratch, 'altered-event.tar');
		writeArchive(file, replacePart(entries, part.name, gzipLines(lines), await siteKeyOf(db)));
		await expectRefused(file, { part: 'audit chain', kind: 'chain', message: /first break at seq 3 \(changed, hash\)/ });
	});

	// Defined only where both stores are at hand (PGlite source, DATABASE_URL_TEST set).
	if (kind === 'pglite' && databaseKinds.includes('postgresql')) test('a PGlite backup restores exactly into a PostgreSQL server', async () => {
		const t = await emptyTarget('postgresql', scratch);
		try {
			await restoreBackup(backup.file, t.target, { migrationsFolder, actor: restorer });
			const restored = await t.open();
			const head = backup.manifest.ledger.head.seq;
			const want = await tableTexts(db, { maxAuditSeq: head });
			const got = await tableTexts(restored.db, { maxAuditSeq: head });
			for (const [table, rows] of want) expect({ table, rows: got.get(table) }).toEqual({ table, rows });
			expect((await verifyChain(restored.db, { engine: 'app', roots: true })).ok).toBe(true);
		} finally {
			await t.dispose();
		}
	});
});
