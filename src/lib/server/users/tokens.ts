import { randomUUID } from 'node:crypto';
import { and, desc, eq, isNull, sql } from 'drizzle-orm';
import type { Database, Executor } from '../db/client';
import { apiToken, user } from '../db/schema';
import { runUnitOfWork } from '../work';
import { actorOf } from '../auth/account';
import { AuthError } from '../auth/errors';
import { rolesOf } from '../auth/session';
import { generateApiToken } from '../auth/token';
import type { SessionUser } from '../auth/types';
import { permissionsOf, type Permission } from '$lib/domain/permissions';

/** A token lives at most a year: an integration's credential is reviewed at least that often (11.300(b)). */
export const MAX_TOKEN_DAYS = 365;

/**
 * Creates an API token for a service account with chosen permissions (never more than its roles
 * grant). The token is returned once and only its SHA-256 is stored (ASVS V7.2.4; 11.300(c)).
 */
export async function createApiToken(
	db: Database,
	admin: SessionUser,
	input: { userId: string; label: string; permissions: Permission[]; days: number },
	reason: string
): Promise<{ id: string; token: string; expiresAt: string }> {
	const [account] = await db.select({ kind: user.kind, disabledAt: user.disabledAt }).from(user).where(eq(user.id, input.userId));
	if (!account) throw new AuthError('not-found', 'No such account.');
	if (account.kind !== 'service') throw new AuthError('conflict', 'API tokens are for service accounts only; people sign in.');
	if (account.disabledAt) throw new AuthError('conflict', 'The account is disabled.');
	if (!Number.isInteger(input.days) || input.days < 1 || input.days > MAX_TOKEN_DAYS) throw new AuthError('invalid-input', `A token expires within 1 to ${MAX_TOKEN_DAYS} days.`);
	const granted = permissionsOf(await rolesOf(db, input.userId));
	const beyond = input.permissions.filter((p) => !granted.includes(p));
	if (beyond.length) throw new AuthError('invalid-input', `The account's roles do not grant: ${beyond.join(', ')}.`);
	if (input.permissions.length === 0) throw new AuthError('invalid-input', 'Choose at least one permission.');
	const { token, tokenHash } = generateApiToken();
	const id = randomUUID();
	const permissions = [...new Set(input.permissions)].sort();
	const expiresAt = await runUnitOfWork(db, actorOf(admin), async (uow) => {
		const [row] = await uow.tx
			.insert(apiToken)
			.values({ id, userId: input.userId, tokenHash, label: input.label.trim(), permissions, expiresAt: sql`now() + make_interval(days => ${input.days})` as unknown as Date })
			.returning({ expiresAt: apiToken.expiresAt });
		await uow.audit({ action: 'api-token.create', entityType: 'api-token', entityId: id, after: { userId: input.userId, label: input.label.trim(), permissions, expiresAt: row.expiresAt.toISOString() }, reason });
		return row.expiresAt.toISOString();
	});
	return { id, token, expiresAt };
}

/**
 * Revokes one token of one account. The account is part of the match (finding 35): a form posted
 * on one person's page cannot revoke another account's token by its id; it is "not found".
 */
export async function revokeApiToken(db: Database, admin: SessionUser, target: { userId: string; tokenId: string }, reason: string): Promise<void> {
	const { userId, tokenId } = target;
	await runUnitOfWork(db, actorOf(admin), async (uow) => {
		const revoked = await uow.tx
			.update(apiToken)
			.set({ revokedAt: sql`now()` })
			.where(and(eq(apiToken.id, tokenId), eq(apiToken.userId, userId), isNull(apiToken.revokedAt)))
			.returning({ id: apiToken.id, label: apiToken.label, userId: apiToken.userId });
		if (revoked.length === 0) throw new AuthError('not-found', 'No such token, or it was already revoked.');
		await uow.audit({ action: 'api-token.revoke', entityType: 'api-token', entityId: tokenId, after: { userId: revoked[0].userId, label: revoked[0].label, revoked: true }, reason });
	});
}

export interface TokenSummary {
	id: string;
	label: string;
	permissions: string[];
	createdAt: string;
	expiresAt: string;
	revokedAt: string | null;
	lastUsedAt: string | null;
}

/** Never the hash: only what the admin page shows. */
export async function listApiTokens(db: Executor, userId: string): Promise<TokenSummary[]> {
	const rows = await db.select().from(apiToken).where(eq(apiToken.userId, userId)).orderBy(desc(apiToken.createdAt));
	return rows.map((r) => ({
		id: r.id,
		label: r.label,
		permissions: Array.isArray(r.permissions) ? (r.permissions as string[]) : [],
		createdAt: r.createdAt.toISOString(),
		expiresAt: r.expiresAt.toISOString(),
		revokedAt: r.revokedAt?.toISOString() ?? null,
		lastUsedAt: r.lastUsedAt?.toISOString() ?? null
	}));
}
