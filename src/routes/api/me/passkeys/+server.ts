import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RegistrationResponseJSON } from '@simplewebauthn/server';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requireSession } from '$lib/server/auth/guard';
import { activePasskeys, finishRegistration, relyingParty } from '$lib/server/auth/passkey';
import { authErrorResponse, readJson } from '$lib/server/auth/api';

const body = z.object({
	label: z.string().trim().min(1).max(80),
	response: z.looseObject({ id: z.string(), response: z.looseObject({ clientDataJSON: z.string(), attestationObject: z.string() }) })
});

/** The signed-in person's passkeys (no key material). */
export const GET: RequestHandler = async (event) => {
	const { user } = requireSession(event, 'profile.manage');
	return json((await activePasskeys(database.db, user.id)).map((p) => ({ id: p.id, label: p.label, createdAt: p.createdAt, lastUsedAt: p.lastUsedAt })));
};

/** Stores a passkey whose registration options came from ./options (which re-authenticated). */
export const POST: RequestHandler = async (event) => {
	const { user, session } = requireSession(event, 'profile.manage');
	try {
		const input = await readJson(event.request, body);
		const created = await finishRegistration(database.db, user, session.id, input.response as unknown as RegistrationResponseJSON, input.label, relyingParty(event.url));
		return json(created, { status: 201 });
	} catch (err) {
		return authErrorResponse(err);
	}
};
