import { error, fail } from '@sveltejs/kit';
import type { z } from 'zod';
import type { Actions, PageServerLoad, RequestEvent } from './$types';
import { database } from '$lib/server/db';
import { getConfig } from '$lib/server/config';
import { requirePermission } from '$lib/server/auth/guard';
import { isAuthError } from '$lib/server/auth/errors';
import { hasPermission, isPermission, permissionsOf } from '$lib/domain/permissions';
import { getAccount } from '$lib/server/users/query';
import { resetPassword, setAccountDisabled, unlockAccount, updateAccount } from '$lib/server/users/admin';
import { createApiToken, listApiTokens, revokeApiToken } from '$lib/server/users/tokens';
import { reasonSchema, tokenSchema, updateAccountSchema } from '$lib/server/users/schemas';
import type { SessionUser } from '$lib/server/auth/types';

export const load = (async (event) => {
	const viewer = requirePermission(event, 'user.read');
	const account = await getAccount(database.db, event.params.id);
	if (!account) error(404, { message: 'No such account.' });
	return {
		account,
		tokens: account.kind === 'service' ? await listApiTokens(database.db, account.id) : [],
		grantable: permissionsOf(account.roles),
		canManage: hasPermission(viewer.roles, 'user.manage'),
		isSelf: viewer.id === account.id,
		timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE
	};
}) satisfies PageServerLoad;

type Outcome = { action: string; error?: string; done?: string };

/** Guard first, then parse (so a role without the permission learns nothing), then one service call. */
async function run<S extends z.ZodType>(event: RequestEvent, action: string, schema: S, work: (admin: SessionUser, input: z.infer<S>, form: FormData) => Promise<Record<string, unknown> | void>) {
	const admin = requirePermission(event, 'user.manage');
	const form = await event.request.formData();
	const raw = { ...Object.fromEntries(form), roles: form.getAll('roles'), permissions: form.getAll('permissions') };
	const parsed = schema.safeParse(raw);
	if (!parsed.success) return fail(400, { action, error: parsed.error.issues[0]?.message ?? 'invalid' } satisfies Outcome);
	try {
		const extra = await work(admin, parsed.data, form);
		return { action, done: action, ...(extra ?? {}) };
	} catch (err) {
		if (isAuthError(err)) return fail(err.status, { action, error: err.message } satisfies Outcome);
		throw err;
	}
}

export const actions = {
	update: (event) =>
		run(event, 'update', updateAccountSchema, (admin, input) => updateAccount(database.db, admin, event.params.id, { name: input.name, email: input.email || null, roles: input.roles }, input.reason)),
	disable: (event) => run(event, 'disable', reasonSchema, (admin, input) => setAccountDisabled(database.db, admin, event.params.id, true, input.reason)),
	enable: (event) => run(event, 'enable', reasonSchema, (admin, input) => setAccountDisabled(database.db, admin, event.params.id, false, input.reason)),
	unlock: (event) => run(event, 'unlock', reasonSchema, (admin, input) => unlockAccount(database.db, admin, event.params.id, input.reason)),
	resetPassword: (event) =>
		run(event, 'resetPassword', reasonSchema, async (admin, input) => {
			const { temporaryPassword } = await resetPassword(database.db, admin, event.params.id, input.reason);
			return { temporaryPassword };
		}),
	createToken: (event) =>
		run(event, 'createToken', tokenSchema, async (admin, input) => {
			const created = await createApiToken(database.db, admin, { userId: event.params.id, label: input.label, permissions: input.permissions.filter(isPermission), days: input.days }, input.reason);
			return { token: created.token };
		}),
	revokeToken: (event) =>
		run(event, 'revokeToken', reasonSchema, async (admin, input, form) => {
			const tokenId = form.get('tokenId');
			if (typeof tokenId !== 'string' || !tokenId) error(400, { message: 'Which token?' });
			await revokeApiToken(database.db, admin, { userId: event.params.id, tokenId }, input.reason);
		})
} satisfies Actions;
