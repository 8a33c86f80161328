import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { eq, sql } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { auditEvent, mailOutbox, notificationPreference, user } from '$lib/server/db/schema';
import { runUnitOfWork } from '$lib/server/work';
import { systemActor } from '$lib/server/audit/ledger';
import { queueNotification } from '$lib/server/mail';
import { resolveRecipients } from '$lib/server/mail/recipients';
import { getNotificationChoices, saveNotificationChoices } from '$lib/server/mail/preferences';
import { databaseKinds, type TestDatabase } from '../support/databases';
import { auditHead, auditSince } from '../auth/support/identity';
import { addPerson, mailDatabase } from './support';

async function queuedFor(db: Database, subject: string): Promise<string[]> {
	const rows = await db.select({ to: mailOutbox.toAddress }).from(mailOutbox).where(eq(mailOutbox.subject, subject));
	return rows.map((r) => r.to).sort();
}

describe.each(databaseKinds)('the mail outbox on %s', (kind) => {
	let t: TestDatabase;
	let db: Database;
	const ids: Record<string, string> = {};
	beforeAll(async () => {
		t = await mailDatabase(kind);
		db = t.handle.db;
		ids.on = await addPerson(db, { username: 'sup-on', roles: ['supervisor'] });
		ids.off = await addPerson(db, { username: 'sup-off', roles: ['supervisor'] });
		ids.noMail = await addPerson(db, { username: 'sup-nomail', roles: ['supervisor'], email: null });
		ids.blank = await addPerson(db, { username: 'sup-blank', roles: ['supervisor'], email: '   ' });
		ids.disabled = await addPerson(db, { username: 'sup-disabled', roles: ['supervisor'], disabled: true });
		ids.service = await addPerson(db, { username: 'svc-sup', roles: ['supervisor'], kind: 'service' });
		ids.both = await addPerson(db, { username: 'sup-qa', roles: ['supervisor', 'qa'] });
	});
	afterAll(async () => {
		await t?.dispose();
	});

	test('recipients are the active persons of the roles with an e-mail address who did not turn the kind off, each once', async () => {
		const [sup] = await db.select({ id: user.id }).from(user).where(eq(user.username, 'supervisor'));
		await saveNotificationChoices(db, { id: ids.off, name: 'Test sup-off' }, { ...(await getNotificationChoices(db, ids.off)), 'verification-requested': false });
		const got = await resolveRecipients(db, 'verification-requested', { toRoles: ['supervisor', 'qa'] });
		// sup-qa holds both roles and appears once; the QA person is there through the qa role.
		expect(got.map((r) => r.email).sort()).toEqual(['qa@mail-test.invalid', 'sup-on@mail-test.invalid', 'sup-qa@mail-test.invalid', 'supervisor@mail-test.invalid']);
		// The choice is per kind: sup-off still receives the others.
		expect((await resolveRecipients(db, 'batch-disposed', { toRoles: ['supervisor'] })).map((r) => r.userId)).toContain(ids.off);
		// By id: the same filters apply (disabled, no address).
		const byId = await resolveRecipients(db, 'verification-requested', { toUserIds: [sup.id, ids.disabled, ids.noMail, ids.off] });
		expect(byId.map((r) => r.userId)).toEqual([sup.id]);
		expect(await resolveRecipients(db, 'verification-requested', {})).toEqual([]);
	});

	test('queueNotification writes one row per recipient inside the caller’s transaction', async () => {
		await runUnitOfWork(db, systemActor, async (uow) => {
			await uow.audit({ action: 'test.notice', entityType: 'test' });
			await queueNotification(uow, { kind: 'verification-requested', batchId: 'b-1', subject: 'Queued in the transaction', text: 'Step 1.1 waits.', toRoles: ['supervisor'] });
			// Visible inside the transaction before it commits: written by the same transaction.
			const [inside] = await uow.tx.select({ n: sql<number>`count(*)::int` }).from(mailOutbox).where(eq(mailOutbox.subject, 'Queued in the transaction'));
			expect(inside.n).toBe(3);
		});
		expect(await queuedFor(db, 'Queued in the transaction')).toEqual(['sup-on@mail-test.invalid', 'sup-qa@mail-test.invalid', 'supervisor@mail-test.invalid']);
		const [row] = await db.select().from(mailOutbox).where(eq(mailOutbox.subject, 'Queued in the transaction')).limit(1);
		expect(row).toMatchObject({ kind: 'verification-requested', batchId: 'b-1', status: 'pending', attempts: 0 });
		expect(row.body).toContain('Step 1.1 waits.');
	});

	test('a rolled-back GMP action leaves no outbox row', async () => {
		const err = await runUnitOfWork(db, systemActor, async (uow) => {
			await uow.audit({ action: 'test.notice', entityType: 'test' });
			await queueNotification(uow, { kind: 'deviation-raised', subject: 'Rolled back', text: 'Never sent.', toRoles: ['qa'] });
			throw new Error('the GMP action failed after queueing');
		}).catch((e: Error) => e);
		expect(err).toBeInstanceOf(Error);
		expect(await queuedFor(db, 'Rolled back')).toEqual([]);
	});

	test('a notification that cannot be queued does not roll back the GMP action (savepoint), and is logged', async () => {
		const head = await auditHead(db);
		const logged: unknown[] = [];
		const original = console.error;
		console.error = (...args: unknown[]) => void logged.push(args);
		try {
			await runUnitOfWork(db, systemActor, async (uow) => {
				await uow.audit({ action: 'test.gmp-action', entityType: 'test', after: { done: true } });
				// U+0000 cannot be stored in a PostgreSQL text column (PostgreSQL 15 manual 8.3): the insert fails.
				await queueNotification(uow, { kind: 'deviation-raised', subject: 'Bad\u0000subject', text: 'x', toRoles: ['qa'] });
				await uow.audit({ action: 'test.gmp-action-after', entityType: 'test' });
			});
		} finally {
			console.error = original;
		}
		const events = await auditSince(db, head);
		expect(events.map((e) => e.action)).toEqual(['test.gmp-action', 'test.gmp-action-after']);
		expect(String(logged[0])).toContain('could not queue a deviation-raised notification');
		const [n] = await db.select({ n: sql<number>`count(*)::int` }).from(mailOutbox).where(sql`${mailOutbox.subject} like 'Bad%'`);
		expect(n.n).toBe(0);
	});

	test('changing one’s notification choices is audited with before and after; saving the same choices writes nothing', async () => {
		const head = await auditHead(db);
		const before = await getNotificationChoices(db, ids.on);
		// Default: every kind on (no preference row).
		expect(Object.values(before).every(Boolean)).toBe(true);
		const next = { ...before, 'batch-disposed': false, 'account-locked': false };
		expect((await saveNotificationChoices(db, { id: ids.on, name: 'Test sup-on' }, next)).changed).toBe(true);
		expect(await getNotificationChoices(db, ids.on)).toEqual(next);
		const events = await auditSince(db, head);
		expect(events).toHaveLength(1);
		expect(events[0]).toMatchObject({ action: 'user.notification-preferences', entityType: 'user', entityId: ids.on, actorId: ids.on });
		expect(events[0].before).toEqual(before);
		expect(events[0].after).toEqual(next);
		expect((await saveNotificationChoices(db, { id: ids.on, name: 'Test sup-on' }, next)).changed).toBe(false);
		expect(await auditSince(db, head)).toHaveLength(1);
		// Turned back on: the row says so (not deleted), and the audit trail has both changes.
		await saveNotificationChoices(db, { id: ids.on, name: 'Test sup-on' }, before);
		const rows = await db.select().from(notificationPreference).where(eq(notificationPreference.userId, ids.on));
		expect(rows.every((r) => r.enabled)).toBe(true);
		expect((await db.select().from(auditEvent).where(eq(auditEvent.action, 'user.notification-preferences'))).length).toBeGreaterThanOrEqual(3);
		// Unknown kinds and non-boolean values are refused.
		await expect(saveNotificationChoices(db, { id: ids.on, name: 'x' }, { ...before, 'not-a-kind': true })).rejects.toThrow();
		await expect(saveNotificationChoices(db, { id: ids.on, name: 'x' }, { ...before, 'batch-disposed': 'yes' })).rejects.toThrow();
	});
});
