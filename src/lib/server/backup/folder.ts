import { readdir, rm, stat } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import { BACKUP_FILE } from './create';
import { isBackupRefused } from './errors';
import { checkBackupFile } from './verify';

/**
 * The backups in a folder with the status of each manifest, newest first, for the admin page and
 * the schedule's retention. `deep` also re-hashes every part (slow for big backups).
 */
export interface BackupListing {
	name: string;
	bytes: number;
	modifiedAt: string;
	status: 'good' | 'refused';
	/** Whether the manifest was signed by one of the trusted keys given. */
	trustedKey: boolean | null;
	reason: string | null;
	part: string | null;
	createdAt: string | null;
	head: { seq: number; hash: string } | null;
	counts: { tables: number; rows: number; blobs: number; blobBytes: number } | null;
	appVersion: string | null;
	keyId: string | null;
	hashed: boolean;
}

export async function listBackupFiles(dir: string): Promise<{ name: string; path: string; bytes: number; modifiedAt: Date }[]> {
	let names: string[];
	try {
		names = await readdir(resolve(dir));
	} catch {
		return [];
	}
	const out = [];
	for (const name of names.filter((n) => BACKUP_FILE.test(n))) {
		const path = join(resolve(dir), name);
		const s = await stat(path);
		if (s.isFile()) out.push({ name, path, bytes: s.size, modifiedAt: s.mtime });
	}
	// The name holds the UTC time it was taken, so the name order is the time order.
	return out.sort((a, b) => b.name.localeCompare(a.name));
}

export async function inspectBackup(path: string, name: string, bytes: number, modifiedAt: Date, options: { trustedKeyIds?: readonly string[]; deep?: boolean } = {}): Promise<BackupListing> {
	const base = { name, bytes, modifiedAt: modifiedAt.toISOString(), hashed: options.deep === true };
	try {
		const c = await checkBackupFile(path, { deep: options.deep === true });
		return {
			...base,
			status: 'good',
			trustedKey: options.trustedKeyIds ? options.trustedKeyIds.includes(c.signature.keyId) : null,
			reason: null,
			part: null,
			createdAt: c.manifest.createdAt,
			head: c.manifest.ledger.head,
			counts: c.manifest.counts,
			appVersion: c.manifest.app.version,
			keyId: c.signature.keyId
		};
	} catch (err) {
		// An unreadable file is listed as refused too, so one bad file never hides the others.
		const reason = err instanceof Error ? err.message : String(err);
		return { ...base, status: 'refused', trustedKey: null, reason, part: isBackupRefused(err) ? err.part : 'file', createdAt: null, head: null, counts: null, appVersion: null, keyId: null };
	}
}

export async function listBackups(dir: string, options: { trustedKeyIds?: readonly string[] } = {}): Promise<BackupListing[]> {
	const files = await listBackupFiles(dir);
	return Promise.all(files.map((f) => inspectBackup(f.path, f.name, f.bytes, f.modifiedAt, options)));
}

/** Removes the oldest backups beyond `keep` (by name, i.e. by the time taken); returns the names removed. */
export async function pruneBackups(dir: string, keep: number): Promise<string[]> {
	const files = await listBackupFiles(dir);
	const old = files.slice(keep);
	for (const f of old) await rm(f.path, { force: true });
	return old.map((f) => f.name);
}
