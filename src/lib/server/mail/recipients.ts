import { and, eq, inArray, isNull, or, sql } from 'drizzle-orm';
import type { Executor } from '../db/client';
import { notificationPreference, user, userRole, type NotificationKind, type Role } from '../db/schema';

export interface Recipient {
	userId: string;
	name: string;
	email: string;
	locale: string;
}

/**
 * Who receives a notification: the people named by role or id who are active (not disabled), are
 * persons (service accounts read no mail), have an e-mail address and have not turned this kind
 * off (no preference row means on). Each person once, however many of their roles match.
 */
export async function resolveRecipients(db: Executor, kind: NotificationKind, to: { toRoles?: readonly Role[]; toUserIds?: readonly string[] }): Promise<Recipient[]> {
	const roles = [...new Set(to.toRoles ?? [])];
	const ids = [...new Set(to.toUserIds ?? [])];
	if (roles.length === 0 && ids.length === 0) return [];
	const byRole = roles.length > 0 ? inArray(user.id, db.select({ id: userRole.userId }).from(userRole).where(inArray(userRole.role, roles))) : undefined;
	const byId = ids.length > 0 ? inArray(user.id, ids) : undefined;
	const rows = await db
		.select({ userId: user.id, name: user.name, email: user.email, locale: user.locale })
		.from(user)
		.leftJoin(notificationPreference, and(eq(notificationPreference.userId, user.id), eq(notificationPreference.kind, kind)))
		.where(
			and(
				or(byRole, byId),
				isNull(user.disabledAt),
				eq(user.kind, 'person'),
				sql`coalesce(btrim(${user.email}), '') <> ''`,
				sql`coalesce(${notificationPreference.enabled}, true)`
			)
		)
		.orderBy(user.username);
	return rows.map((r) => ({ userId: r.userId, name: r.name, email: (r.email ?? '').trim(), locale: r.locale }));
}
