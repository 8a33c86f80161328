import { fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { changeExecutionSetting, getExecutionSettings, listReasonCodes } from '$lib/server/batches/settings';
import { isExecutionError } from '$lib/server/batches/errors';

/** Batch execution settings (administrators): reason codes for corrections, the late-entry limit. */
export const load = (async (event) => {
	requirePermission(event, 'settings.manage');
	return {
		reasons: await listReasonCodes(database.db, { includeRetired: true }),
		settings: await getExecutionSettings(database.db)
	};
}) satisfies PageServerLoad;

function refused(action: string, err: unknown) {
	if (isExecutionError(err)) return fail(err.status, { action, message: err.message, issues: err.issues ?? [] });
	throw err;
}

const text = (form: FormData, key: string) => String(form.get(key) ?? '');

export const actions = {
	code: async (event) => {
		const user = requirePermission(event, 'settings.manage');
		const form = await event.request.formData();
		const order = Number(text(form, 'sortOrder') || '0');
		try {
			await changeExecutionSetting(
				database.db,
				user,
				{ kind: 'reason-code', value: { code: text(form, 'code').trim(), label: text(form, 'label'), active: form.get('active') === 'on', sortOrder: Number.isInteger(order) ? order : Number.NaN } },
				text(form, 'reason')
			);
			return { action: 'code', saved: text(form, 'code').trim() };
		} catch (err) {
			return refused('code', err);
		}
	},
	late: async (event) => {
		const user = requirePermission(event, 'settings.manage');
		const form = await event.request.formData();
		try {
			await changeExecutionSetting(database.db, user, { kind: 'settings', value: { lateEntryMinutes: Number(text(form, 'lateEntryMinutes')) } }, text(form, 'reason'));
			return { action: 'late', saved: 'late' };
		} catch (err) {
			return refused('late', err);
		}
	}
} satisfies Actions;
