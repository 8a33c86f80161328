/**
 * `npm run backup -- [--out DIR]`: takes a backup of this site (EU GMP Annex 11 §7.2) — every
 * table of the configured database (RIMEBOOK_DATA_DIR or DATABASE_URL), every blob of the
 * configured store, and the signed manifest — as one tar file in DIR (default RIMEBOOK_BACKUP_DIR).
 * With PGlite the data folder can be open in one process only: run it while the server is stopped,
 * or take the backup from the admin page (Backup) while it runs. Audited (backup.start,
 * backup.complete or backup.fail).
 * Exit codes: 0 written; 1 the backup failed (the reason is printed); 2 wrong usage or configuration.
 */
import { userInfo } from 'node:os';
import { getConfig } from '../src/lib/server/config';
import { openDatabase } from '../src/lib/server/db/client';
import { blobStore } from '../src/lib/server/blobs';
import { createBackup, parseBackupConfig } from '../src/lib/server/backup';

function option(name: string): string | undefined {
	const args = process.argv.slice(2);
	const i = args.indexOf(name);
	if (i >= 0) return args[i + 1];
	return args.find((a) => a.startsWith(`${name}=`))?.slice(name.length + 1);
}

let outDir: string | undefined;
try {
	outDir = option('--out') ?? parseBackupConfig().RIMEBOOK_BACKUP_DIR;
} catch (err) {
	console.error(err instanceof Error ? err.message : err);
	process.exit(2);
}
if (!outDir) {
	console.error('Usage: npm run backup -- --out DIR   (or set RIMEBOOK_BACKUP_DIR)');
	process.exit(2);
}

const config = getConfig();
const handle = openDatabase({ dataDir: config.RIMEBOOK_DATA_DIR, databaseUrl: config.DATABASE_URL });
try {
	await handle.connect();
	const started = performance.now();
	const result = await createBackup(handle.db, handle.kind, blobStore(), {
		outDir,
		actor: { id: null, name: `Rimebook backup command (OS user ${userInfo().username})` },
		via: 'command',
		migrationsFolder: config.RIMEBOOK_MIGRATIONS_DIR
	});
	const c = result.manifest.counts;
	console.log(`Backup written: ${result.file}`);
	console.log(`  ${c.tables} tables, ${c.rows} rows, ${c.blobs} blobs (${c.blobBytes} bytes); ${result.bytes} bytes in all, ${((performance.now() - started) / 1000).toFixed(1)} s`);
	console.log(`  ledger head seq ${result.manifest.ledger.head.seq} ${result.manifest.ledger.head.hash}`);
	console.log(`  manifest SHA-256 ${result.manifestSha256}, signed with key ${result.keyId}`);
	process.exitCode = 0;
} catch (err) {
	console.error(`Backup failed: ${err instanceof Error ? err.message : String(err)}`);
	process.exitCode = 1;
} finally {
	await handle.close();
}
