import { fail, message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import type { Actions, PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { isAuthError } from '$lib/server/auth/errors';
import { createAccount } from '$lib/server/users/admin';
import { createAccountSchema } from '$lib/server/users/schemas';

export const load = (async (event) => {
	requirePermission(event, 'user.manage');
	return { form: await superValidate(zod4(createAccountSchema)) };
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		const admin = requirePermission(event, 'user.manage');
		const form = await superValidate(event.request, zod4(createAccountSchema));
		if (!form.valid) return fail(400, { form });
		const { reason, ...input } = form.data;
		try {
			const created = await createAccount(database.db, admin, { ...input, email: input.email || null }, reason);
			// The one-time password travels in this response only: never in a URL, a log or the audit trail.
			return { form, created: { id: created.id, username: input.username, temporaryPassword: created.temporaryPassword } };
		} catch (err) {
			if (isAuthError(err)) return message(form, err.message, { status: err.status });
			throw err;
		}
	}
} satisfies Actions;
