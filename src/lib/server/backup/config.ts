import { z } from 'zod';
import { ConfigError } from '../config';

/**
 * The backup settings, validated like the rest of the configuration (a bad value names the
 * variable and what is allowed). Scheduled backups run only when RIMEBOOK_BACKUP_DIR is set.
 *   RIMEBOOK_BACKUP_DIR             folder for backups (the admin page lists it; the schedule writes to it)
 *   RIMEBOOK_BACKUP_INTERVAL_HOURS  hours between scheduled backups; 0 turns the schedule off (default 24)
 *   RIMEBOOK_BACKUP_KEEP            how many scheduled backups to keep; older ones are removed (default 14)
 */
const schema = z.object({
	RIMEBOOK_BACKUP_DIR: z.string().min(1, 'must be a folder path').optional(),
	RIMEBOOK_BACKUP_INTERVAL_HOURS: z.coerce
		.number({ message: 'must be a number of hours (0 turns scheduled backups off)' })
		.min(0, 'must be a number of hours (0 turns scheduled backups off)')
		.max(24 * 366, 'must be at most a year of hours')
		.default(24),
	RIMEBOOK_BACKUP_KEEP: z.coerce.number({ message: 'must be a whole number of backups to keep' }).int('must be a whole number of backups to keep').min(1, 'must keep at least 1 backup').max(10_000).default(14)
});

export type BackupConfig = z.infer<typeof schema>;

export function parseBackupConfig(env: Record<string, string | undefined> = process.env): BackupConfig {
	const cleaned = Object.fromEntries(Object.entries(env).filter(([k, v]) => k.startsWith('RIMEBOOK_BACKUP_') && v !== undefined && v !== ''));
	const result = schema.safeParse(cleaned);
	if (!result.success) {
		throw new ConfigError(result.error.issues.map((i) => `${String(i.path[0])} ${i.message} (got "${cleaned[String(i.path[0])] ?? ''}")`));
	}
	return result.data;
}
