import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { eq } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { batch, mailOutbox, user } from '$lib/server/db/schema';
import { recordStepEntry } from '$lib/server/batches/entries';
import { verifyStep } from '$lib/server/batches/verify';
import { recordFailure, type LockoutPolicy } from '$lib/server/auth/lockout';
import { deliverDue } from '$lib/server/mail/sender';
import { localTransport } from '$lib/server/mail/transport';
import { databaseKinds, type TestDatabase } from '../support/databases';
import { addFixtureInventory, credentialsOf, insertBatch, personOf, seededDatabase } from '../batches/support';
import { addPerson, oneStepTemplate, startTestSmtp, sucroseValues } from './support';

describe.each(databaseKinds)('notifications wired into the GMP actions on %s', (kind) => {
	let t: TestDatabase;
	let db: Database;
	beforeAll(async () => {
		t = await seededDatabase(kind);
		db = t.handle.db;
		await addFixtureInventory(db);
		// The demo seed executes batch steps, which queue notices of their own; these tests count only theirs.
		await db.delete(mailOutbox);
		// The demo seed is heavy (password hashing, an executed batch); on a loaded 2-core machine it can pass 2 minutes.
	}, 300_000);
	afterAll(async () => {
		await t?.dispose();
	});

	test('a critical step performed asks the supervisors to verify; the verification that completes the batch tells QA it is ready for review', async () => {
		// A German-speaking QA person gets the notice in German (i18n de/mail.ts).
		await addPerson(db, { username: 'qa-de', roles: ['qa'], locale: 'de' });
		const operator = await personOf(db, 'operator');
		const supervisor = await personOf(db, 'supervisor');
		const id = await insertBatch(db, { template: oneStepTemplate, number: 'TB-MAIL-01' });
		const entry = await recordStepEntry(db, { user: operator.user, session: operator.session, address: '10.3.0.1', batchId: id, stepKey: 'weigh_sucrose', values: sucroseValues, credentials: credentialsOf(operator) });
		expect(entry.status).toBe('in-progress');
		const asked = await db.select().from(mailOutbox).where(eq(mailOutbox.batchId, id));
		// 21 CFR 211.188(b)(11): a second person checks the critical step; the supervisors are asked, nobody else.
		expect(asked.map((r) => [r.kind, r.toAddress])).toEqual([['verification-requested', 'dario.kettleby@eskerdal.example']]);
		expect(asked[0].subject).toBe('Verification requested: TB-MAIL-01, step 1.1 Dispense sucrose');
		expect(asked[0].body).toContain('Tomas Reyvik performed step 1.1 Dispense sucrose of batch TB-MAIL-01');

		const verified = await verifyStep(db, { user: supervisor.user, session: supervisor.session, address: '10.3.0.2', batchId: id, stepKey: 'weigh_sucrose', credentials: credentialsOf(supervisor) });
		expect(verified.status).toBe('awaiting-review');
		const [b] = await db.select({ status: batch.status }).from(batch).where(eq(batch.id, id));
		expect(b.status).toBe('awaiting-review');
		const ready = await db.select().from(mailOutbox).where(eq(mailOutbox.kind, 'batch-ready-for-review'));
		expect(ready.map((r) => r.toAddress).sort()).toEqual(['priya.halden@eskerdal.example', 'qa-de@mail-test.invalid']);
		expect(ready.find((r) => r.toAddress === 'qa-de@mail-test.invalid')?.subject).toBe('Charge bereit zur Prüfung: TB-MAIL-01');
		expect(ready.find((r) => r.toAddress === 'priya.halden@eskerdal.example')?.subject).toBe('Batch ready for review: TB-MAIL-01');

		// Delivered and read back: the German text survives the trip (RFC 2045/2047 encodings via nodemailer and mailparser).
		const smtp = await startTestSmtp();
		const transport = localTransport(smtp.port);
		try {
			const pass = await deliverDue(db, transport, { log: () => {} });
			expect(pass).toMatchObject({ claimed: 3, sent: 3 });
			const german = smtp.received.find((r) => r.envelopeTo[0] === 'qa-de@mail-test.invalid')!;
			expect(german.mail.subject).toBe('Charge bereit zur Prüfung: TB-MAIL-01');
			expect(german.mail.text).toContain('Alle Schritte der Charge TB-MAIL-01 sind ausgeführt.');
			expect(german.mail.text).toContain('Benachrichtigungen');
		} finally {
			transport.close();
			await smtp.close();
		}
	});

	test('an account locked tells the administrators; a locked name that belongs to nobody sends nothing (it may be a typed password)', async () => {
		await db.delete(mailOutbox);
		const policy: LockoutPolicy = { attempts: 1, windowMinutes: 15, lockMinutes: 30, addressFailures: 100, addressChallenges: 100 };
		expect(await recordFailure(db, { username: 'no-such-person', account: null, address: '10.3.0.9', kind: 'password' }, policy)).toEqual({ locked: true });
		expect(await db.select().from(mailOutbox)).toEqual([]);
		const [op2] = await db.select({ id: user.id, name: user.name }).from(user).where(eq(user.username, 'operator2'));
		expect(await recordFailure(db, { username: 'operator2', account: op2, address: '10.3.0.9', kind: 'signing' }, policy)).toEqual({ locked: true });
		const rows = await db.select().from(mailOutbox);
		expect(rows.map((r) => [r.kind, r.toAddress, r.subject])).toEqual([['account-locked', 'sam.whitcombe@eskerdal.example', 'Account locked: operator2']]);
		// No secret in the mail: neither a password nor the address the attempts came from.
		expect(rows[0].body).not.toContain('frost-demo');
		expect(rows[0].body).not.toContain('10.3.0.9');
	});
});
