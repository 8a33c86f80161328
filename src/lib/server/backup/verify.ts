import { BackupRefusedError } from './errors';
import { MANIFEST_NAME, SIGNATURE_NAME, openManifest, sha256Hex, type Manifest, type ManifestSignature } from './manifest';
import { hashStream } from './rows';
import { indexTar, readEntry, streamEntry, type TarEntry } from './tar';

/**
 * Checks a backup file without touching any database: complete archive, manifest signature
 * (Ed25519, RFC 8032), every part present with its size and SHA-256 (FIPS 180-4), nothing extra.
 * `deep: false` skips the hashing of parts (the admin list shows that status quickly; restore always
 * hashes). Throws BackupRefusedError naming the part and the mismatch.
 */
export interface CheckedBackup {
	manifest: Manifest;
	signature: ManifestSignature;
	manifestSha256: string;
	entries: Map<string, TarEntry>;
	hashed: boolean;
}

export async function checkBackupFile(file: string, options: { trustedKeyIds?: readonly string[]; deep?: boolean } = {}): Promise<CheckedBackup> {
	const list = await indexTar(file);
	const entries = new Map<string, TarEntry>();
	for (const e of list) {
		if (entries.has(e.name)) throw new BackupRefusedError(e.name, 'unexpected', `The backup file holds ${e.name} twice.`);
		entries.set(e.name, e);
	}
	const manifestEntry = entries.get(MANIFEST_NAME);
	const signatureEntry = entries.get(SIGNATURE_NAME);
	if (!manifestEntry) throw new BackupRefusedError(MANIFEST_NAME, 'missing', `The backup file has no ${MANIFEST_NAME}: it is not a complete Rimebook backup.`);
	if (!signatureEntry) throw new BackupRefusedError(SIGNATURE_NAME, 'missing', `The backup file has no ${SIGNATURE_NAME}: its manifest cannot be trusted.`);
	const manifestRaw = await readEntry(file, manifestEntry);
	const { manifest, signature } = openManifest(manifestRaw, await readEntry(file, signatureEntry), options.trustedKeyIds);
	const listed = new Set(manifest.parts.map((p) => p.name));
	for (const name of entries.keys()) {
		if (name !== MANIFEST_NAME && name !== SIGNATURE_NAME && !listed.has(name)) throw new BackupRefusedError(name, 'unexpected', `The backup file holds ${name}, which its manifest does not list.`);
	}
	for (const part of manifest.parts) {
		const entry = entries.get(part.name);
		if (!entry) throw new BackupRefusedError(part.name, 'missing', `Part ${part.name} is listed in the manifest but missing from the backup file.`);
		if (entry.size !== part.bytes) throw new BackupRefusedError(part.name, 'size-mismatch', `Part ${part.name} has ${entry.size} bytes; the manifest says ${part.bytes}.`);
		if (part.kind === 'blob' && part.name !== `blobs/${part.sha256}`) throw new BackupRefusedError(part.name, 'manifest', `Part ${part.name} is not named by its SHA-256 ${part.sha256}.`);
	}
	if (options.deep !== false) {
		for (const part of manifest.parts) {
			const { sha256 } = await hashStream(streamEntry(file, entries.get(part.name)!));
			if (sha256 !== part.sha256) throw new BackupRefusedError(part.name, 'sha256-mismatch', `Part ${part.name} has SHA-256 ${sha256}; the manifest says ${part.sha256}: the part was changed or damaged.`);
		}
	}
	return { manifest, signature, manifestSha256: sha256Hex(manifestRaw), entries, hashed: options.deep !== false };
}
