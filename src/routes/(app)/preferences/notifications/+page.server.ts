import { fail } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import type { Actions, PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { user as userTable } from '$lib/server/db/schema';
import { requirePermission } from '$lib/server/auth/guard';
import { actorOf } from '$lib/server/auth/account';
import { notificationKind } from '$lib/server/mail';
import { getNotificationChoices, saveNotificationChoices } from '$lib/server/mail/preferences';

export const load = (async (event) => {
	const user = requirePermission(event, 'profile.manage');
	const [row] = await database.db.select({ email: userTable.email }).from(userTable).where(eq(userTable.id, user.id));
	return { kinds: [...notificationKind], choices: await getNotificationChoices(database.db, user.id), email: row?.email?.trim() || null };
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		const user = requirePermission(event, 'profile.manage');
		const form = await event.request.formData();
		// A checkbox that is not ticked is not sent (HTML 4.10.18.3.1): absent means off.
		const offered = new Set<string>(notificationKind);
		const unknown = [...form.keys()].filter((k) => k.startsWith('kind:') && !offered.has(k.slice(5)));
		if (unknown.length > 0) return fail(400, { invalid: true });
		const choices = Object.fromEntries(notificationKind.map((k) => [k, form.get(`kind:${k}`) === 'on']));
		await saveNotificationChoices(database.db, { ...actorOf(user), id: user.id }, choices);
		return { saved: true };
	}
} satisfies Actions;
