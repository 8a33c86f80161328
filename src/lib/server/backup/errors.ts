/**
 * Why a backup was refused: which part, what kind of mismatch, in words. Restore refuses before it
 * writes anything that stays (Annex 11 §7.2: a backup is only good if its restore is verified), so
 * this error always means the target is as empty as it was.
 */
export type RefusalKind =
	| 'truncated'
	| 'damaged'
	| 'unexpected'
	| 'missing'
	| 'size-mismatch'
	| 'sha256-mismatch'
	| 'signature'
	| 'untrusted-key'
	| 'manifest'
	| 'count-mismatch'
	| 'not-empty'
	| 'migrations'
	| 'chain'
	| 'head-mismatch';

export class BackupRefusedError extends Error {
	constructor(
		/** The part of the backup at fault: 'file', 'manifest.json', 'db/<table>.jsonl.gz', 'blobs/<sha256>', 'target', 'audit chain'. */
		public readonly part: string,
		public readonly kind: RefusalKind,
		message: string
	) {
		super(message);
		this.name = 'BackupRefusedError';
	}
}

export function isBackupRefused(err: unknown): err is BackupRefusedError {
	return err instanceof BackupRefusedError;
}
