import type { DatabaseHandle } from '../db/client';
import { systemActor } from '../audit/ledger';
import { runUnitOfWork } from '../work';
import type { BlobStore } from '../blobs/store';
import { parseBackupConfig, type BackupConfig } from './config';
import { createBackup } from './create';
import { listBackupFiles, pruneBackups } from './folder';

/**
 * Scheduled backups (EU GMP Annex 11 §7.2 "regular back-ups") to the folder the site chose
 * (RIMEBOOK_BACKUP_DIR), every RIMEBOOK_BACKUP_INTERVAL_HOURS, keeping the newest
 * RIMEBOOK_BACKUP_KEEP. Whether one is due is read from the folder itself (the newest backup's name
 * holds the UTC time it was taken), so a restart neither skips nor doubles one. A timer, unref'd,
 * off the request path. Each backup is audited by createBackup; removing old ones is audited too.
 * With several app nodes on one PostgreSQL, set the folder on one node only.
 */
export interface BackupScheduleOptions {
	config?: BackupConfig;
	store: BlobStore;
	migrationsFolder: string;
	checkSeconds?: number;
}

const running = new WeakMap<object, ReturnType<typeof setInterval>>();

/** The UTC time a backup file was taken, from its name (rimebook-backup-YYYYMMDDTHHMMSSmmmZ.tar). */
export function takenAt(name: string): number {
	const m = /^rimebook-backup-(\d{4})(\d{2})(\d{2})T(\d{2})(\d{2})(\d{2})(\d{3})Z\.tar$/.exec(name);
	return m ? Date.UTC(+m[1], +m[2] - 1, +m[3], +m[4], +m[5], +m[6], +m[7]) : Number.NaN;
}

/** Takes a backup now if the newest in the folder is older than the interval; returns the file written, if any. */
export async function runScheduledBackup(handle: DatabaseHandle, options: BackupScheduleOptions & { config: BackupConfig; now?: Date }): Promise<string | null> {
	const { RIMEBOOK_BACKUP_DIR: dir, RIMEBOOK_BACKUP_INTERVAL_HOURS: hours, RIMEBOOK_BACKUP_KEEP: keep } = options.config;
	if (!dir || hours <= 0) return null;
	const now = options.now ?? new Date();
	const [newest] = await listBackupFiles(dir);
	if (newest && now.getTime() - takenAt(newest.name) < hours * 3_600_000) return null;
	const result = await createBackup(handle.db, handle.kind, options.store, { outDir: dir, actor: systemActor, via: 'schedule', migrationsFolder: options.migrationsFolder, now });
	const removed = await pruneBackups(dir, keep);
	if (removed.length > 0) {
		await runUnitOfWork(handle.db, systemActor, (uow) => uow.audit({ action: 'backup.prune', entityType: 'backup', entityId: null, after: { removed, keep } }));
	}
	return result.file;
}

/** Starts the schedule once per database when a folder is configured and the interval is not 0; returns whether it runs. */
export function startBackupSchedule(handle: DatabaseHandle, options: BackupScheduleOptions): boolean {
	const config = options.config ?? parseBackupConfig();
	if (!config.RIMEBOOK_BACKUP_DIR || config.RIMEBOOK_BACKUP_INTERVAL_HOURS <= 0) return false;
	if (running.has(handle)) return true;
	let busy = false;
	const tick = async () => {
		if (busy) return;
		busy = true;
		try {
			const file = await runScheduledBackup(handle, { ...options, config });
			if (file) console.log(`[backup] scheduled backup written: ${file}`);
		} catch (err) {
			console.error('[backup] scheduled backup failed:', err instanceof Error ? err.message : err);
		} finally {
			busy = false;
		}
	};
	const timer = setInterval(tick, (options.checkSeconds ?? 300) * 1000);
	timer.unref?.();
	running.set(handle, timer);
	return true;
}

export function isBackupScheduleRunning(handle: DatabaseHandle): boolean {
	return running.has(handle);
}

export function stopBackupSchedule(handle: DatabaseHandle): void {
	const timer = running.get(handle);
	if (timer) clearInterval(timer);
	running.delete(handle);
}
