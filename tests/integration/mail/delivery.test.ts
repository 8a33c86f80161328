import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { eq, inArray, sql } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { openDatabase } from '$lib/server/db/client';
import { mailOutbox, user } from '$lib/server/db/schema';
import { runUnitOfWork } from '$lib/server/work';
import { systemActor } from '$lib/server/audit/ledger';
import { queueNotification } from '$lib/server/mail';
import { deliverDue } from '$lib/server/mail/sender';
import { localTransport } from '$lib/server/mail/transport';
import { recordFailure, type LockoutPolicy } from '$lib/server/auth/lockout';
import { databaseKinds, type TestDatabase } from '../support/databases';
import { addPerson, freePort, mailDatabase, startTestSmtp } from './support';

// Retry delays of zero, so a test can try again at once; the real schedule is tests/unit/mail/backoff.test.ts.
const now = { baseSeconds: 0, maxSeconds: 0, giveUpSeconds: 5 * 24 * 3600 };
const quiet = { log: () => {} };

async function outboxRows(db: Database, ids?: string[]) {
	const q = db.select().from(mailOutbox);
	return ids ? q.where(inArray(mailOutbox.id, ids)) : q;
}

describe.each(databaseKinds)('mail delivery on %s', (kind) => {
	let t: TestDatabase;
	let db: Database;
	beforeAll(async () => {
		t = await mailDatabase(kind);
		db = t.handle.db;
	});
	afterAll(async () => {
		await t?.dispose();
	});

	test('a queued notification reaches the SMTP server; mailparser reads its subject, recipients and text', async () => {
		const smtp = await startTestSmtp();
		const transport = localTransport(smtp.port, 'Rimebook test <rimebook@mail-test.invalid>');
		try {
			await runUnitOfWork(db, systemActor, async (uow) => {
				await uow.audit({ action: 'test.notice', entityType: 'test' });
				await queueNotification(uow, { kind: 'batch-ready-for-review', batchId: 'B-TEST-1', subject: 'Batch ready for review: TB-0001', text: 'Every step of batch TB-0001 is performed.', toRoles: ['qa'] });
			});
			const pass = await deliverDue(db, transport, { ...quiet, retry: now });
			expect(pass).toMatchObject({ claimed: 1, sent: 1, retried: 0, failed: 0 });
			expect(smtp.received).toHaveLength(1);
			const { envelopeTo, mail } = smtp.received[0];
			// The one QA account (support.ts, mailDatabase).
			expect(envelopeTo).toEqual(['qa@mail-test.invalid']);
			// RFC 5322 3.6.2 / 3.6.3: From and To as written; 3.6.5: the Subject unchanged.
			expect(mail.subject).toBe('Batch ready for review: TB-0001');
			expect(mail.from?.value[0].address).toBe('rimebook@mail-test.invalid');
			expect(Array.isArray(mail.to) ? mail.to[0].value[0].address : mail.to?.value[0].address).toBe('qa@mail-test.invalid');
			expect(mail.text).toContain('Every step of batch TB-0001 is performed.');
			// RFC 3676 4.3 signature separator before the footer; RFC 3834 5: marked as auto-generated.
			expect(mail.text).toMatch(/\n-- \n/);
			expect(mail.headers.get('auto-submitted')).toBe('auto-generated');
			// RFC 5322 3.6.4: every message carries a Message-ID; the outbox keeps it.
			const [row] = await db.select().from(mailOutbox).where(eq(mailOutbox.id, String(mail.headers.get('x-rimebook-outbox-id'))));
			expect(row).toMatchObject({ status: 'sent', attempts: 1, lastError: null, messageId: mail.messageId });
		} finally {
			transport.close();
			await smtp.close();
		}
	});

	test('SMTP down: the GMP action (an account lock) commits, the outbox keeps the row, attempts increase, and it is delivered once the server is up', async () => {
		const port = await freePort();
		const transport = localTransport(port);
		const target = await addPerson(db, { username: 'lockme', roles: ['operator'] });
		const policy: LockoutPolicy = { attempts: 2, windowMinutes: 15, lockMinutes: 30, addressFailures: 100, addressChallenges: 100 };
		const account = { id: target, name: 'Test lockme' };
		await db.execute(sql`update mail_outbox set status = 'sent' where status = 'pending'`);
		// Nothing listens on the port while the account is locked: the lock does not wait for mail.
		expect(await recordFailure(db, { username: 'lockme', account, address: '10.9.0.1', kind: 'password' }, policy)).toEqual({ locked: false });
		expect(await recordFailure(db, { username: 'lockme', account, address: '10.9.0.1', kind: 'password' }, policy)).toEqual({ locked: true });
		const [locked] = await db.select({ lockedUntil: user.lockedUntil }).from(user).where(eq(user.id, target));
		expect(locked.lockedUntil).not.toBeNull();
		const queued = await db.select().from(mailOutbox).where(eq(mailOutbox.status, 'pending'));
		// The administrator is told; the row waits.
		expect(queued.map((r) => [r.kind, r.toAddress])).toEqual([['account-locked', 'admin@mail-test.invalid']]);
		const lines: string[] = [];
		for (const attempt of [1, 2]) {
			const pass = await deliverDue(db, transport, { retry: now, log: (l) => lines.push(l) });
			expect(pass).toMatchObject({ claimed: 1, sent: 0, retried: 1 });
			const [row] = await outboxRows(db, [queued[0].id]);
			expect(row).toMatchObject({ status: 'pending', attempts: attempt, claimToken: null });
			expect(row.lastError).toMatch(/ECONNREFUSED|ESOCKET|ECONNECTION/);
		}
		// The failure is logged with the reason and the row, never the address or the text.
		expect(lines).toHaveLength(2);
		expect(lines[0]).toContain(queued[0].id);
		expect(lines[0]).toMatch(/ECONNREFUSED|ESOCKET|ECONNECTION/);
		expect(lines.join('\n')).not.toContain('admin@mail-test');
		const smtp = await startTestSmtp({ port });
		try {
			const pass = await deliverDue(db, transport, { ...quiet, retry: now });
			expect(pass).toMatchObject({ claimed: 1, sent: 1 });
			expect(smtp.received.map((r) => r.mail.subject)).toEqual(['Account locked: lockme']);
			expect(smtp.received[0].mail.text).toContain('after 2 failed attempts');
			const [row] = await outboxRows(db, [queued[0].id]);
			expect(row).toMatchObject({ status: 'sent', attempts: 3, lastError: null });
		} finally {
			transport.close();
			await smtp.close();
		}
	});

	test('a retry waits its backoff: a row that just failed is not due again at once', async () => {
		const transport = localTransport(await freePort());
		try {
			await runUnitOfWork(db, systemActor, async (uow) => {
				await uow.audit({ action: 'test.notice', entityType: 'test' });
				await queueNotification(uow, { kind: 'batch-disposed', subject: 'Backoff', text: 'Backoff test.', toRoles: ['qa'] });
			});
			const first = await deliverDue(db, transport, { ...quiet, retry: { baseSeconds: 60, maxSeconds: 3600, giveUpSeconds: 5 * 24 * 3600 } });
			expect(first.retried).toBe(1);
			const again = await deliverDue(db, transport, quiet);
			expect(again.claimed).toBe(0);
			const [row] = await db.select({ wait: sql<number>`extract(epoch from ${mailOutbox.nextAttemptAt} - now())::float8` }).from(mailOutbox).where(eq(mailOutbox.subject, 'Backoff'));
			// 60 s after the first failure (policy above), less the few ms the test took.
			expect(Number(row.wait)).toBeGreaterThan(50);
			expect(Number(row.wait)).toBeLessThanOrEqual(60);
		} finally {
			transport.close();
			await db.execute(sql`update mail_outbox set status = 'failed' where subject = 'Backoff'`);
		}
	});

	test('a recipient the server refuses for good (550 at RCPT TO) is marked failed at once; the others are sent', async () => {
		await addPerson(db, { username: 'qa-gone', roles: ['qa'], email: 'gone@mail-test.invalid' });
		const smtp = await startTestSmtp({ refuse: ['gone@mail-test.invalid'] });
		const transport = localTransport(smtp.port);
		const lines: string[] = [];
		try {
			await runUnitOfWork(db, systemActor, async (uow) => {
				await uow.audit({ action: 'test.notice', entityType: 'test' });
				await queueNotification(uow, { kind: 'deviation-raised', subject: 'Refusal test', text: 'Refusal test.', toRoles: ['qa'] });
			});
			const pass = await deliverDue(db, transport, { retry: now, log: (l) => lines.push(l) });
			expect(pass).toMatchObject({ claimed: 2, sent: 1, failed: 1, retried: 0 });
			const rows = await db.select().from(mailOutbox).where(eq(mailOutbox.subject, 'Refusal test'));
			const gone = rows.find((r) => r.toAddress === 'gone@mail-test.invalid')!;
			// RFC 5321 4.2.1: 5yz is a permanent negative completion; retrying would not help.
			expect(gone).toMatchObject({ status: 'failed', attempts: 1 });
			expect(gone.lastError).toContain('550');
			expect(rows.find((r) => r.toAddress !== 'gone@mail-test.invalid')?.status).toBe('sent');
			expect(lines.join('\n')).toMatch(/gave up .* refused for good/);
		} finally {
			transport.close();
			await smtp.close();
		}
	});

	test('a claimed row is not claimed again while its lease holds; when a sender dies the lease runs out and it is due again', async () => {
		const [{ id: qaId }] = await db.select({ id: user.id }).from(user).where(eq(user.username, 'qa'));
		const transport = localTransport(await freePort());
		try {
			await runUnitOfWork(db, systemActor, async (uow) => {
				await uow.audit({ action: 'test.notice', entityType: 'test' });
				await queueNotification(uow, { kind: 'batch-disposed', subject: 'Lease test', text: 'Lease test.', toUserIds: [qaId] });
			});
			// A sender that claimed the row and then died: a lease and a token, never marked.
			await db.execute(sql`update mail_outbox set claimed_until = now() + interval '1 hour', claim_token = 'dead-sender', attempts = attempts + 1 where subject = 'Lease test'`);
			expect((await deliverDue(db, transport, { ...quiet, retry: now })).claimed).toBe(0);
			await db.execute(sql`update mail_outbox set claimed_until = now() - interval '1 second' where subject = 'Lease test'`);
			const pass = await deliverDue(db, transport, { ...quiet, retry: now });
			expect(pass.claimed).toBe(1);
			const [row] = await db.select().from(mailOutbox).where(eq(mailOutbox.subject, 'Lease test'));
			expect(row.attempts).toBe(2);
			expect(row.claimToken).toBeNull();
		} finally {
			transport.close();
			await db.execute(sql`update mail_outbox set status = 'failed' where subject = 'Lease test'`);
		}
	});

	test('two senders on one database never send a notification twice', async () => {
		// A second connection pool to the same PostgreSQL database is a second server process's view;
		// PGlite is one process by nature, so there both senders share it.
		const other = kind === 'postgresql' ? openDatabase({ dataDir: '', databaseUrl: t.url }) : null;
		await other?.connect();
		const smtp = await startTestSmtp({ delayMs: 15 });
		const a = localTransport(smtp.port);
		const b = localTransport(smtp.port);
		try {
			const people = await Promise.all(Array.from({ length: 12 }, (_, i) => addPerson(db, { username: `twin${i}`, roles: [] })));
			await runUnitOfWork(db, systemActor, async (uow) => {
				await uow.audit({ action: 'test.notice', entityType: 'test' });
				for (let i = 0; i < 3; i++) await queueNotification(uow, { kind: 'batch-disposed', subject: `Twin ${i}`, text: 'Twin test.', toUserIds: people });
			});
			const queued = await db.select({ id: mailOutbox.id }).from(mailOutbox).where(sql`${mailOutbox.subject} like 'Twin %'`);
			expect(queued).toHaveLength(36);
			const drain = async (d: Database, transport: typeof a) => {
				let claimed = 0;
				for (;;) {
					const pass = await deliverDue(d, transport, { ...quiet, retry: now, batchSize: 4 });
					if (pass.claimed === 0) return claimed;
					claimed += pass.claimed;
				}
			};
			const [byA, byB] = await Promise.all([drain(db, a), drain(other?.db ?? db, b)]);
			expect(byA + byB).toBe(36);
			if (kind === 'postgresql') {
				// Both really worked at once (each claimed some), and still each row went out once.
				expect(byA).toBeGreaterThan(0);
				expect(byB).toBeGreaterThan(0);
			}
			const ids = smtp.received.map((r) => String(r.mail.headers.get('x-rimebook-outbox-id')));
			expect(ids).toHaveLength(36);
			expect(new Set(ids).size).toBe(36);
			expect(new Set(ids)).toEqual(new Set(queued.map((q) => q.id)));
			const rows = await outboxRows(db, queued.map((q) => q.id));
			expect(rows.every((r) => r.status === 'sent' && r.attempts === 1)).toBe(true);
		} finally {
			a.close();
			b.close();
			await smtp.close();
			await other?.close();
		}
	});
});
