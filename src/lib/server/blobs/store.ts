import { mkdir, readFile, rename, stat, writeFile } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import { randomUUID } from 'node:crypto';

/**
 * Where attachment bytes live, named by their SHA-256 (content-addressed: the name proves the
 * content, and the same file is stored once). Local folder by default; S3 when configured.
 */
export interface BlobStore {
	readonly kind: 'local' | 's3';
	put(sha256: string, bytes: Uint8Array, contentType: string): Promise<void>;
	get(sha256: string): Promise<Uint8Array | null>;
}

const SHA = /^[0-9a-f]{64}$/;

export function checkName(sha256: string): void {
	if (!SHA.test(sha256)) throw new Error('A blob is named by a SHA-256 in hex.');
}

/** RIMEBOOK_DATA_DIR/blobs/ab/cd/<sha256>; written to a temporary name and renamed, so no half file is ever read. */
export function localBlobStore(root: string): BlobStore {
	const base = resolve(root);
	const pathOf = (sha: string) => join(base, sha.slice(0, 2), sha.slice(2, 4), sha);
	return {
		kind: 'local',
		async put(sha256, bytes) {
			checkName(sha256);
			const target = pathOf(sha256);
			try {
				await stat(target);
				return; // same name, same bytes
			} catch {
				/* not there yet */
			}
			await mkdir(join(base, sha256.slice(0, 2), sha256.slice(2, 4)), { recursive: true });
			const temp = `${target}.${randomUUID()}.part`;
			await writeFile(temp, bytes, { flag: 'wx' });
			await rename(temp, target);
		},
		async get(sha256) {
			checkName(sha256);
			try {
				return new Uint8Array(await readFile(pathOf(sha256)));
			} catch {
				return null;
			}
		}
	};
}
