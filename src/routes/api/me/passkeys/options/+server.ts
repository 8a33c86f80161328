import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requireSession } from '$lib/server/auth/guard';
import { beginRegistration, relyingParty } from '$lib/server/auth/passkey';
import { reauthenticate } from '$lib/server/auth/signin';
import { clientAddress } from '$lib/server/auth/request';
import { authErrorResponse, readJson } from '$lib/server/auth/api';

const body = z.object({ password: z.string().min(1).max(512) });

/** Registration options for a new passkey, after the current password (ASVS V6.3.9: re-authenticate before adding a credential). */
export const POST: RequestHandler = async (event) => {
	const { user, session } = requireSession(event, 'profile.manage');
	try {
		const { password } = await readJson(event.request, body);
		const db = database.db;
		await reauthenticate(db, user, password, clientAddress(event));
		return json(await beginRegistration(db, user, session.id, relyingParty(event.url)));
	} catch (err) {
		return authErrorResponse(err);
	}
};
