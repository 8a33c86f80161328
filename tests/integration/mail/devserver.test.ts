import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { eq } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { mailOutbox, user } from '$lib/server/db/schema';
import { parseConfig } from '$lib/server/config';
import { runUnitOfWork } from '$lib/server/work';
import { systemActor } from '$lib/server/audit/ledger';
import { queueNotification } from '$lib/server/mail';
import { ensureMailSender, mailRuntime, stopMailSender } from '$lib/server/mail/runtime';
import { databaseKinds, type TestDatabase } from '../support/databases';
import { mailDatabase } from './support';

describe.each(databaseKinds)('the development mail set-up on %s', (kind) => {
	let t: TestDatabase;
	let db: Database;
	beforeAll(async () => {
		t = await mailDatabase(kind);
		db = t.handle.db;
	});
	afterAll(async () => {
		await stopMailSender();
		await t?.dispose();
	});

	test('in production without SMTP nothing starts and the outbox keeps the notices', async () => {
		const runtime = await ensureMailSender(db, parseConfig({ NODE_ENV: 'production' }));
		expect(runtime).toBeNull();
		await stopMailSender();
	});

	test('without SMTP outside production a local SMTP server receives what the background sender delivers, for the development mailbox', async () => {
		const runtime = await ensureMailSender(db, parseConfig({ NODE_ENV: 'development', RIMEBOOK_MAIL_FROM: 'Rimebook dev <dev@mail-test.invalid>' }));
		expect(runtime?.capture).not.toBeNull();
		expect(await mailRuntime()).toBe(runtime);
		expect(runtime!.transport.describe).toBe(`smtp://127.0.0.1:${runtime!.capture!.port}`);
		const [qa] = await db.select({ id: user.id }).from(user).where(eq(user.username, 'qa'));
		await runUnitOfWork(db, systemActor, async (uow) => {
			await uow.audit({ action: 'test.notice', entityType: 'test' });
			await queueNotification(uow, { kind: 'deviation-awaiting-approval', deviationId: 'd-1', subject: 'Deviation DEV-2026-9 awaits approval', text: 'Invented deviation.', toUserIds: [qa.id] });
		});
		const pass = await runtime!.sender.wake();
		expect(pass).toMatchObject({ sent: 1 });
		const got = runtime!.capture!.messages;
		expect(got).toHaveLength(1);
		expect(got[0]).toMatchObject({ envelopeTo: ['qa@mail-test.invalid'], subject: 'Deviation DEV-2026-9 awaits approval', from: '"Rimebook dev" <dev@mail-test.invalid>' });
		expect(got[0].text).toContain('Invented deviation.');
		await stopMailSender();
		expect(await mailRuntime()).toBeNull();
	});
});
