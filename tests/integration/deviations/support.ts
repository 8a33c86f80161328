import { randomUUID } from 'node:crypto';
import { and, eq, sql } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { auditEvent, deviation, signature, user, userRole } from '$lib/server/db/schema';
import { runUnitOfWork } from '$lib/server/work';
import { systemActor } from '$lib/server/audit/ledger';
import { hashPassword } from '$lib/server/auth/password';
import { AuthError } from '$lib/server/auth/errors';
import { DeviationError } from '$lib/server/deviations';
import { DEMO_PASSWORD } from '../batches/support';

/** A second QA person (invented), so one QA can submit and another approve (four eyes). */
export async function addSecondQa(db: Database): Promise<string> {
	const id = randomUUID();
	const passwordHash = await hashPassword(DEMO_PASSWORD);
	await runUnitOfWork(db, systemActor, async (uow) => {
		await uow.tx.insert(user).values({ id, username: 'qa2', name: 'Wren Calloway', email: 'wren.calloway@eskerdal.example', kind: 'person', passwordHash, passwordChangedAt: new Date(), mustChangePassword: false });
		await uow.tx.insert(userRole).values({ userId: id, role: 'qa' });
		await uow.audit({ action: 'user.create', entityType: 'user', entityId: id, after: { username: 'qa2', roles: ['qa'] } });
	});
	return id;
}

/** "<status> <code>" of a refusal, or "ok". */
export async function outcome(p: Promise<unknown>): Promise<string> {
	try {
		await p;
		return 'ok';
	} catch (err) {
		if (err instanceof DeviationError || err instanceof AuthError) return `${err.status} ${err.code}`;
		throw err;
	}
}

/** What a refusal must leave untouched: the deviation rows, their signatures, and the ledger head. */
export async function snapshotOf(db: Database, deviationId?: string) {
	const [d] = await db.select({ n: sql<number>`count(*)::int` }).from(deviation);
	const [s] = await db.select({ n: sql<number>`count(*)::int` }).from(signature).where(eq(signature.entityType, 'deviation'));
	const [e] = await db.select({ n: sql<number>`count(*)::int` }).from(auditEvent).where(eq(auditEvent.entityType, 'deviation'));
	const row = deviationId ? (await db.select().from(deviation).where(eq(deviation.id, deviationId)))[0] : null;
	return { deviations: d.n, signatures: s.n, deviationEvents: e.n, row };
}

export async function eventsOf(db: Database, deviationId: string) {
	return db.select().from(auditEvent).where(and(eq(auditEvent.entityType, 'deviation'), eq(auditEvent.entityId, deviationId))).orderBy(auditEvent.seq);
}
