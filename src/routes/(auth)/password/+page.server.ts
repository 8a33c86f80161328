import { redirect } from '@sveltejs/kit';
import { fail, message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import type { Actions, PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requireSession } from '$lib/server/auth/guard';
import { passwordChangeSchema } from '$lib/server/auth/schemas';
import { safeRedirectPath } from '$lib/server/auth/redirect';
import { clientAddress } from '$lib/server/auth/request';
import { isAuthError } from '$lib/server/auth/errors';
import { changeOwnPassword } from '$lib/server/users/password';
import { PASSWORD_MAX_LENGTH, PASSWORD_MIN_LENGTH, PASSWORD_RECOMMENDED_LENGTH } from '$lib/domain/password-policy';

export const load = (async (event) => {
	const { user } = requireSession(event, 'profile.manage', { allowPendingPasswordChange: true });
	return {
		form: await superValidate(zod4(passwordChangeSchema)),
		mustChange: user.mustChangePassword,
		redirectTo: safeRedirectPath(event.url.searchParams.get('redirectTo')),
		rules: { min: PASSWORD_MIN_LENGTH, recommended: PASSWORD_RECOMMENDED_LENGTH, max: PASSWORD_MAX_LENGTH }
	};
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		const { user, session } = requireSession(event, 'profile.manage', { allowPendingPasswordChange: true });
		const form = await superValidate(event.request, zod4(passwordChangeSchema));
		const { current, next } = form.data;
		form.data = { current: '', next: '', confirm: '' };
		if (!form.valid) return fail(400, { form });
		try {
			await changeOwnPassword(database.db, user, session.id, { current, next, address: clientAddress(event) });
		} catch (err) {
			if (!isAuthError(err)) throw err;
			if (err.code === 'password-rules') {
				const problems = (err.details?.problems as string[] | undefined) ?? [];
				return setError(form, 'next', problems.length ? problems : ['too-short'], { status: 400 });
			}
			return message(form, err.code, { status: err.status });
		}
		redirect(303, safeRedirectPath(event.url.searchParams.get('redirectTo')));
	}
} satisfies Actions;
