import { fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { getConfig } from '$lib/server/config';
import { requireSession } from '$lib/server/auth/guard';
import { activePasskeys, relyingParty, removePasskey } from '$lib/server/auth/passkey';
import { reauthenticate } from '$lib/server/auth/signin';
import { clientAddress } from '$lib/server/auth/request';
import { isAuthError } from '$lib/server/auth/errors';
import { readSignatureCredentials, signatureFailure, signingContext } from '$lib/server/signatures/credentials';
import { listAcknowledgements, signAcknowledgement } from '$lib/server/signatures/acknowledgement';
import { messagesFor } from '$lib/i18n';

export const load = (async (event) => {
	const { user, session } = requireSession(event, 'profile.manage');
	const db = database.db;
	const passkeys = await activePasskeys(db, user.id);
	return {
		account: { username: user.username, name: user.name, roles: user.roles },
		session: { createdAt: session.createdAt.toISOString(), method: session.method },
		passkeys: passkeys.map((p) => ({ id: p.id, label: p.label, createdAt: p.createdAt.toISOString(), lastUsedAt: p.lastUsedAt?.toISOString() ?? null })),
		acknowledgements: await listAcknowledgements(db, user.id),
		// The statement in the reader's language: what is shown is exactly what is signed.
		statement: messagesFor(event.locals.locale).auth.profile.statement,
		signing: await signingContext(db, user, session),
		timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE
	};
}) satisfies PageServerLoad;

export const actions = {
	/** Signs the accountability acknowledgement (21 CFR 11.100(c)) through the signing ceremony. */
	acknowledge: async (event) => {
		const { user, session } = requireSession(event, 'profile.manage');
		const form = await event.request.formData();
		try {
			const credentials = readSignatureCredentials(form);
			const sig = await signAcknowledgement(database.db, {
				signer: user,
				session,
				credentials,
				address: clientAddress(event),
				relyingParty: relyingParty(event.url),
				statement: messagesFor(event.locals.locale).auth.profile.statement,
				locale: event.locals.locale
			});
			return { signed: sig.id };
		} catch (err) {
			return signatureFailure(err);
		}
	},
	/** Removes a passkey after the current password (ASVS V6.3.9). */
	removePasskey: async (event) => {
		const { user } = requireSession(event, 'profile.manage');
		const form = await event.request.formData();
		const passkeyId = form.get('passkeyId');
		const password = form.get('password');
		if (typeof passkeyId !== 'string' || !passkeyId || typeof password !== 'string' || !password) return fail(400, { passkeyError: 'invalid-input', passkeyId });
		try {
			await reauthenticate(database.db, user, password, clientAddress(event));
			await removePasskey(database.db, user, passkeyId);
		} catch (err) {
			if (isAuthError(err)) return fail(err.status, { passkeyError: err.code, passkeyId });
			throw err;
		}
		return { passkeyRemoved: true };
	}
} satisfies Actions;
