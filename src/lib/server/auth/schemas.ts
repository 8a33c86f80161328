import { z } from 'zod';
import { PASSWORD_MAX_LENGTH } from '$lib/domain/password-policy';

/** The sign-in form: plain fields so a form without JavaScript posts the same thing. */
export const signInSchema = z.object({
	username: z.string().trim().min(1).max(100),
	// Up to the maximum the rules allow (plus slack for normalisation); never trimmed (NIST §3.1.1.2).
	password: z.string().min(1).max(PASSWORD_MAX_LENGTH * 4)
});

export const passwordChangeSchema = z
	.object({
		current: z.string().min(1).max(PASSWORD_MAX_LENGTH * 4),
		next: z.string().min(1).max(PASSWORD_MAX_LENGTH * 4),
		confirm: z.string().min(1).max(PASSWORD_MAX_LENGTH * 4)
	})
	.refine((v) => v.next === v.confirm, { path: ['confirm'], message: 'mismatch' });
