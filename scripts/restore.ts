/**
 * `npm run restore -- FILE --data-dir DIR [--key-id ID]`: restores a backup into an EMPTY data folder
 * (PGlite), or with DATABASE_URL set into that EMPTY PostgreSQL database. Blobs go to the S3 bucket
 * if RIMEBOOK_S3_BUCKET is set, else to DIR/blobs (DIR defaulting to RIMEBOOK_DATA_DIR with DATABASE_URL).
 * `npm run restore -- FILE --check` only checks the file (signature and every SHA-256).
 *
 * Before anything stays written it checks the manifest's Ed25519 signature and every part's
 * SHA-256, loads everything in one transaction, verifies the whole audit chain and its head
 * against the manifest, and only then commits (EU GMP Annex 11 §7.2; 21 CFR 11.10(c)).
 * --key-id pins the site's checkpoint key id (shown on Audit trail › Verify): a manifest signed by
 * any other key is refused.
 * Exit codes: 0 restored (or checked good); 1 refused (the part and the mismatch are printed);
 * 2 wrong usage, configuration or an unexpected error.
 */
import { userInfo } from 'node:os';
import { join, resolve } from 'node:path';
import { getConfig } from '../src/lib/server/config';
import { blobStore } from '../src/lib/server/blobs';
import { localBlobStore } from '../src/lib/server/blobs/store';
import { checkBackupFile, isBackupRefused, restoreBackup, type RestoreTarget } from '../src/lib/server/backup';

const args = process.argv.slice(2);
function option(name: string): string | undefined {
	const i = args.indexOf(name);
	if (i >= 0) return args[i + 1];
	return args.find((a) => a.startsWith(`${name}=`))?.slice(name.length + 1);
}
const values = new Set([option('--data-dir'), option('--key-id')]);
const file = args.find((a) => !a.startsWith('--') && !values.has(a));
if (!file) {
	console.error('Usage: npm run restore -- FILE --data-dir DIR [--key-id ID]   (or DATABASE_URL=postgres://… npm run restore -- FILE)\n       npm run restore -- FILE --check');
	process.exit(2);
}

const config = getConfig();
const keyId = option('--key-id');
const trustedKeyIds = keyId ? [keyId] : undefined;
try {
	if (args.includes('--check')) {
		const c = await checkBackupFile(resolve(file), { trustedKeyIds, deep: true });
		console.log(`Good: ${file} — ${c.manifest.parts.length} parts match their SHA-256; manifest ${c.manifestSha256} signed by key ${c.signature.keyId}; taken ${c.manifest.createdAt}; ledger head seq ${c.manifest.ledger.head.seq}.`);
		process.exit(0);
	}
	const dataDir = option('--data-dir');
	let target: RestoreTarget;
	if (config.DATABASE_URL) {
		const blobDir = join(resolve(dataDir ?? config.RIMEBOOK_DATA_DIR), 'blobs');
		target = { kind: 'postgresql', url: config.DATABASE_URL, blobs: config.RIMEBOOK_S3_BUCKET ? blobStore() : localBlobStore(blobDir), blobDir: config.RIMEBOOK_S3_BUCKET ? undefined : blobDir };
	} else {
		if (!dataDir) {
			console.error('Name the empty data folder to restore into: --data-dir DIR (or set DATABASE_URL for a PostgreSQL server).');
			process.exit(2);
		}
		target = { kind: 'pglite', dataDir, blobs: config.RIMEBOOK_S3_BUCKET ? blobStore() : undefined };
	}
	const report = await restoreBackup(resolve(file), target, {
		migrationsFolder: config.RIMEBOOK_MIGRATIONS_DIR,
		actor: { id: null, name: `Rimebook restore command (OS user ${userInfo().username})` },
		trustedKeyIds,
		onProgress: (step) => process.stderr.write(`… ${step}\n`)
	});
	console.log(`Restored ${report.file} (taken ${report.createdAt}): ${report.tables} tables, ${report.rows} rows, ${report.blobs} blobs.`);
	console.log(`  audit chain verified up to seq ${report.head.seq} ${report.head.hash} (the manifest's head); restore recorded as event ${report.restoreEvent.seq}.`);
	process.exitCode = 0;
} catch (err) {
	if (isBackupRefused(err)) {
		console.error(`Refused (${err.part}: ${err.kind}): ${err.message}`);
		console.error('Nothing was restored; the target is as it was.');
		process.exitCode = 1;
	} else {
		console.error(`Restore failed: ${err instanceof Error ? err.message : String(err)}`);
		process.exitCode = 2;
	}
}
