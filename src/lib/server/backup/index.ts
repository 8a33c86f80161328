// Backup and restore (issue 9; EU GMP Annex 11 §7.2; 21 CFR 11.10(c)). See create.ts, restore.ts.
export { createBackup, backupFileName, BACKUP_FILE, type BackupResult, type BackupOptions } from './create';
export { restoreBackup, type RestoreTarget, type RestoreOptions, type RestoreReport } from './restore';
export { checkBackupFile, type CheckedBackup } from './verify';
export { listBackups, listBackupFiles, inspectBackup, pruneBackups, type BackupListing } from './folder';
export { BackupRefusedError, isBackupRefused, type RefusalKind } from './errors';
export { parseBackupConfig, type BackupConfig } from './config';
export type { Manifest } from './manifest';
export { startBackupSchedule, stopBackupSchedule, isBackupScheduleRunning, runScheduledBackup } from './schedule';
