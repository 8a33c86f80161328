import { fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { getPreferences, savePreferences } from '$lib/server/batches/preferences';
import { preferencesSchema } from '$lib/domain/batch/preferences';

export const load = (async (event) => {
	const user = requirePermission(event, 'profile.manage');
	return { preferences: await getPreferences(database.db, user.id), locale: user.locale };
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		const user = requirePermission(event, 'profile.manage');
		const form = await event.request.formData();
		const parsed = preferencesSchema.safeParse({ temperatureUnit: form.get('temperatureUnit'), pressureUnit: form.get('pressureUnit'), timeFormat: form.get('timeFormat') });
		if (!parsed.success) return fail(400, { message: 'Choose one of the options offered.' });
		await savePreferences(database.db, user, { preferences: parsed.data, locale: String(form.get('locale') ?? 'en') });
		return { saved: true };
	}
} satisfies Actions;
