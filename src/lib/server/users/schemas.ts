import { z } from 'zod';
import { roles } from '$lib/domain/permissions';

/** Every admin change carries its reason into the audit trail (Annex 11, 9 and 12.3). */
export const reasonField = z.string().trim().min(3, 'reason').max(500);

export const createAccountSchema = z.object({
	username: z.string().trim().toLowerCase().regex(/^[a-z][a-z0-9._-]{1,39}$/, 'username'),
	name: z.string().trim().min(1, 'name').max(120),
	email: z.union([z.literal(''), z.email('email')]).default(''),
	kind: z.enum(['person', 'service']).default('person'),
	roles: z.array(z.enum(roles)).default([]),
	reason: reasonField
});

export const updateAccountSchema = z.object({
	name: z.string().trim().min(1, 'name').max(120),
	email: z.union([z.literal(''), z.email('email')]).default(''),
	roles: z.array(z.enum(roles)).default([]),
	reason: reasonField
});

export const reasonSchema = z.object({ reason: reasonField });

export const tokenSchema = z.object({
	label: z.string().trim().min(1).max(80),
	permissions: z.array(z.string()).default([]),
	days: z.coerce.number().int().min(1).max(365).default(90),
	reason: reasonField
});
