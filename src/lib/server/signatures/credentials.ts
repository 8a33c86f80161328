import { fail, type ActionFailure } from '@sveltejs/kit';
import type { AuthenticationResponseJSON } from '@simplewebauthn/server';
import { z } from 'zod';
import type { Executor } from '../db/client';
import { activePasskeys } from '../auth/passkey';
import { AuthError } from '../auth/errors';
import type { SessionInfo, SessionUser } from '../auth/types';
import type { SignatureCredentials } from './ceremony';

/**
 * The form fields the SignDialog posts: `sign_username`, `sign_password`, or `sign_passkey`
 * (the JSON of a WebAuthn assertion from @simplewebauthn/browser's startAuthentication).
 */
export const signatureFields = { username: 'sign_username', password: 'sign_password', passkey: 'sign_passkey' } as const;

const assertionSchema = z.object({
	id: z.string().min(1),
	rawId: z.string().min(1),
	type: z.literal('public-key'),
	response: z.object({
		clientDataJSON: z.string().min(1),
		authenticatorData: z.string().min(1),
		signature: z.string().min(1),
		userHandle: z.string().optional()
	}),
	clientExtensionResults: z.record(z.string(), z.unknown()).default({}),
	authenticatorAttachment: z.enum(['platform', 'cross-platform']).optional()
});

/** Reads the signing credentials from a submitted form; throws AuthError('invalid-input') if absent. */
export function readSignatureCredentials(form: FormData): SignatureCredentials {
	const passkey = form.get(signatureFields.passkey);
	if (typeof passkey === 'string' && passkey) {
		let parsed: unknown;
		try {
			parsed = JSON.parse(passkey);
		} catch {
			throw new AuthError('invalid-input', 'The passkey response cannot be read.');
		}
		const result = assertionSchema.safeParse(parsed);
		if (!result.success) throw new AuthError('invalid-input', 'The passkey response cannot be read.');
		return { method: 'passkey', response: result.data as AuthenticationResponseJSON };
	}
	const username = form.get(signatureFields.username);
	const password = form.get(signatureFields.password);
	if (typeof password !== 'string' || password === '') throw new AuthError('invalid-input', 'Enter your password.');
	return { method: 'password', username: typeof username === 'string' ? username : undefined, password };
}

/** What the SignDialog needs to know to ask for the right things (11.200(a)(1)). */
export interface SigningContext {
	/** The first signing of this continuous session: ask for username and password. */
	askUsername: boolean;
	/** A passkey may be used (a later signing and the person has one). */
	passkeyAllowed: boolean;
	username: string;
}

export async function signingContext(db: Executor, user: SessionUser, session: SessionInfo | null): Promise<SigningContext> {
	const askUsername = !session || session.firstSignedAt === null;
	const passkeys = askUsername ? [] : await activePasskeys(db, user.id);
	return { askUsername, passkeyAllowed: passkeys.length > 0, username: user.username };
}

/** A form action's answer to a refused signing: its status and a plain message, nothing saved. */
export function signatureFailure(err: unknown): ActionFailure<{ signError: string; code: string }> {
	if (err instanceof AuthError) return fail(err.status, { signError: err.message, code: err.code });
	throw err;
}
