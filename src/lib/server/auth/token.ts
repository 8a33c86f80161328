import { and, eq, gt, isNull, sql } from 'drizzle-orm';
import type { Database } from '../db/client';
import { apiToken, user } from '../db/schema';
import { isPermission, type Permission } from '$lib/domain/permissions';
import { generateToken, hashToken, rolesOf } from './session';
import type { SessionUser } from './types';

/** Service-account tokens say what they are; the prefix lets secret scanners find a leaked one. */
export const API_TOKEN_PREFIX = 'rbk_';

export function generateApiToken(): { token: string; tokenHash: string } {
	const token = API_TOKEN_PREFIX + generateToken();
	return { token, tokenHash: hashToken(token) };
}

/** The bearer token of an `Authorization: Bearer …` header (RFC 6750 §2.1), or null. */
export function readBearerToken(header: string | null): string | null {
	if (!header) return null;
	const match = /^Bearer ([A-Za-z0-9._~+/-]+=*)$/.exec(header.trim());
	return match ? match[1] : null;
}

/**
 * The service account behind an API token, or null when the token is unknown, revoked, expired,
 * or its account is disabled or not a service account. Only SHA-256(token) is looked up
 * (ASVS V7.2.4 for tokens as for sessions).
 */
export async function authenticateApiToken(db: Database, token: string): Promise<SessionUser | null> {
	const [row] = await db
		.select({
			tokenId: apiToken.id,
			permissions: apiToken.permissions,
			lastUsedAt: apiToken.lastUsedAt,
			id: user.id,
			username: user.username,
			name: user.name,
			kind: user.kind,
			locale: user.locale
		})
		.from(apiToken)
		.innerJoin(user, eq(user.id, apiToken.userId))
		.where(
			and(
				eq(apiToken.tokenHash, hashToken(token)),
				isNull(apiToken.revokedAt),
				gt(apiToken.expiresAt, sql`now()`),
				isNull(user.disabledAt),
				eq(user.kind, 'service')
			)
		);
	if (!row) return null;
	if (!row.lastUsedAt || Date.now() - row.lastUsedAt.getTime() > 60_000) {
		await db.update(apiToken).set({ lastUsedAt: sql`now()` }).where(eq(apiToken.id, row.tokenId));
	}
	const permissions = (Array.isArray(row.permissions) ? row.permissions : []).filter(isPermission) as Permission[];
	return {
		id: row.id,
		username: row.username,
		name: row.name,
		kind: 'service',
		roles: await rolesOf(db, row.id),
		tokenPermissions: permissions,
		mustChangePassword: false,
		locale: row.locale
	};
}
