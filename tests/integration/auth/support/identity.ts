import { eq, sql } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { auditEvent, user } from '$lib/server/db/schema';
import { seedDemo } from '$lib/server/db/seed';
import { rolesOf } from '$lib/server/auth/session';
import type { SessionUser } from '$lib/server/auth/types';
import { createTestDatabase, type TestDatabase } from '../../support/databases';

export const DEMO_PASSWORD = 'frost-demo-2026';

/** A migrated test database with the invented demo people (src/lib/server/db/seed/scenario.ts). */
export async function seededDatabase(kind: 'pglite' | 'postgresql'): Promise<TestDatabase> {
	const t = await createTestDatabase(kind);
	await seedDemo(t.handle.db, { password: DEMO_PASSWORD });
	return t;
}

export async function sessionUser(db: Database, username: string): Promise<SessionUser> {
	const [row] = await db.select().from(user).where(eq(user.username, username));
	if (!row) throw new Error(`no user ${username}`);
	return { id: row.id, username: row.username, name: row.name, kind: row.kind, roles: await rolesOf(db, row.id), mustChangePassword: row.mustChangePassword, locale: row.locale };
}

/** Audit events after a sequence number, oldest first. */
export async function auditSince(db: Database, seq: number) {
	return db.select().from(auditEvent).where(sql`${auditEvent.seq} > ${seq}`).orderBy(auditEvent.seq);
}

export async function auditHead(db: Database): Promise<number> {
	const [row] = await db.select({ seq: sql<number>`coalesce(max(${auditEvent.seq}), 0)::int` }).from(auditEvent);
	return row.seq;
}
