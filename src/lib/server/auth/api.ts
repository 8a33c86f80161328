import { json } from '@sveltejs/kit';
import type { z } from 'zod';
import { AuthError, isAuthError } from './errors';

export const PASSKEY_NONCE_COOKIE = 'rimebook_passkey_nonce';

/** An API error body `{ message, code }` with the error's status (style.md, API routes). */
export function authErrorResponse(err: unknown): Response {
	if (isAuthError(err)) return json({ message: err.message, code: err.code }, { status: err.status });
	throw err;
}

/** Parses a JSON body with a zod schema; a bad body is a 400 with the issues. */
export async function readJson<S extends z.ZodType>(request: Request, schema: S): Promise<z.infer<S>> {
	const raw = await request.json().catch(() => undefined);
	const result = schema.safeParse(raw);
	if (!result.success) throw new AuthError('invalid-input', 'The request body is not valid.', { issues: result.error.issues.map((i) => ({ path: i.path.join('.'), message: i.message })) });
	return result.data;
}
