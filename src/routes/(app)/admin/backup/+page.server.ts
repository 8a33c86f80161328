import { fail } from '@sveltejs/kit';
import { join, resolve } from 'node:path';
import type { Actions, PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { getConfig } from '$lib/server/config';
import { requirePermission } from '$lib/server/auth/guard';
import { actorOf } from '$lib/server/auth/account';
import { listSiteKeys } from '$lib/server/audit/checkpoint';
import { blobStore } from '$lib/server/blobs';
import { BACKUP_FILE, createBackup, inspectBackup, isBackupScheduleRunning, listBackupFiles, listBackups, parseBackupConfig } from '$lib/server/backup';

/** Backups (administrators): the folder and schedule, the backups there with their manifest status, take one now. */
export const load = (async (event) => {
	requirePermission(event, 'settings.manage');
	const config = parseBackupConfig();
	const dir = config.RIMEBOOK_BACKUP_DIR;
	const trustedKeyIds = (await listSiteKeys(database.db)).map((k) => k.id);
	return {
		timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE,
		folder: dir ? resolve(dir) : null,
		intervalHours: config.RIMEBOOK_BACKUP_INTERVAL_HOURS,
		keep: config.RIMEBOOK_BACKUP_KEEP,
		scheduled: isBackupScheduleRunning(database),
		backups: dir ? await listBackups(dir, { trustedKeyIds }) : []
	};
}) satisfies PageServerLoad;

function folderOrFail() {
	const dir = parseBackupConfig().RIMEBOOK_BACKUP_DIR;
	return dir ? resolve(dir) : null;
}

export const actions = {
	// Annex 11 §7.2: a backup on demand, audited (backup.start / backup.complete) under the admin's name.
	create: async (event) => {
		const user = requirePermission(event, 'settings.manage');
		const dir = folderOrFail();
		if (!dir) return fail(409, { action: 'create', message: 'No backup folder is set (RIMEBOOK_BACKUP_DIR).' });
		try {
			const result = await createBackup(database.db, database.kind, blobStore(), { outDir: dir, actor: actorOf(user), via: 'admin', migrationsFolder: getConfig().RIMEBOOK_MIGRATIONS_DIR });
			return { action: 'create', created: result.file.split(/[\\/]/).at(-1)! };
		} catch (err) {
			return fail(500, { action: 'create', message: err instanceof Error ? err.message : String(err) });
		}
	},
	// Re-hashes every part of one backup (FIPS 180-4) and checks the manifest signature (RFC 8032).
	verify: async (event) => {
		requirePermission(event, 'settings.manage');
		const dir = folderOrFail();
		const name = String((await event.request.formData()).get('name') ?? '');
		// Only a backup file of the folder, by its exact name pattern: no path in it.
		if (!dir || !BACKUP_FILE.test(name)) return fail(400, { action: 'verify', message: 'No such backup.' });
		const file = (await listBackupFiles(dir)).find((f) => f.name === name);
		if (!file) return fail(404, { action: 'verify', message: 'No such backup.' });
		const trustedKeyIds = (await listSiteKeys(database.db)).map((k) => k.id);
		return { action: 'verify', checked: await inspectBackup(join(dir, name), name, file.bytes, file.modifiedAt, { trustedKeyIds, deep: true }) };
	}
} satisfies Actions;
