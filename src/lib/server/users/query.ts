import { asc, eq, sql } from 'drizzle-orm';
import type { Executor } from '../db/client';
import { user, userRole } from '../db/schema';
import { isRole, type Role } from '$lib/domain/permissions';

/** What the People pages show of an account: never the password hash. */
export interface AccountSummary {
	id: string;
	username: string;
	name: string;
	email: string | null;
	kind: 'person' | 'service';
	roles: Role[];
	disabled: boolean;
	lockedUntil: string | null;
	mustChangePassword: boolean;
	createdAt: string;
}

export async function listAccounts(db: Executor, onlyId?: string): Promise<AccountSummary[]> {
	const rows = await db
		.select({
			id: user.id,
			username: user.username,
			name: user.name,
			email: user.email,
			kind: user.kind,
			disabledAt: user.disabledAt,
			lockedUntil: sql<string | null>`case when ${user.lockedUntil} > now() then ${user.lockedUntil} end`,
			mustChangePassword: user.mustChangePassword,
			createdAt: user.createdAt
		})
		.from(user)
		.where(onlyId ? eq(user.id, onlyId) : undefined)
		.orderBy(asc(user.username));
	const grants = await db
		.select({ userId: userRole.userId, role: userRole.role })
		.from(userRole)
		.where(onlyId ? eq(userRole.userId, onlyId) : undefined);
	const rolesBy = new Map<string, Role[]>();
	for (const g of grants) if (isRole(g.role)) rolesBy.set(g.userId, [...(rolesBy.get(g.userId) ?? []), g.role]);
	return rows.map((r) => ({
		id: r.id,
		username: r.username,
		name: r.name,
		email: r.email,
		kind: r.kind,
		roles: (rolesBy.get(r.id) ?? []).sort(),
		disabled: r.disabledAt !== null,
		lockedUntil: r.lockedUntil ? new Date(r.lockedUntil).toISOString() : null,
		mustChangePassword: r.mustChangePassword,
		createdAt: r.createdAt.toISOString()
	}));
}

export async function getAccount(db: Executor, id: string): Promise<AccountSummary | null> {
	const [account] = await listAccounts(db, id);
	return account ?? null;
}
