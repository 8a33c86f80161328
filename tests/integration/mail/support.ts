import { randomUUID } from 'node:crypto';
import { createServer } from 'node:net';
import { SMTPServer, type SMTPServerOptions } from 'smtp-server';
import { simpleParser, type ParsedMail } from 'mailparser';
import type { Database } from '$lib/server/db/client';
import { user, userRole, type Role } from '$lib/server/db/schema';
import { runUnitOfWork } from '$lib/server/work';
import { systemActor } from '$lib/server/audit/ledger';
import { demoTemplateInput } from '$lib/domain/fixtures/demo-template';
import { templateSchema, type Template, type TemplateInput } from '$lib/schemas/template';
import { createTestDatabase, type TestDatabase } from '../support/databases';

/** What the test's own SMTP server received: the envelope and the message as mailparser reads it. */
export interface Received {
	envelopeTo: string[];
	mail: ParsedMail;
}

export interface TestSmtpServer {
	port: number;
	received: Received[];
	close(): Promise<void>;
}

/**
 * An SMTP server of the test's own (smtp-server on 127.0.0.1, authOptional, no STARTTLS:
 * toolchain.md, "Mail in tests"); every message is parsed back with mailparser. `refuse` names
 * recipients it answers 550 at RCPT TO (RFC 5321 4.2.2, "mailbox unavailable": a permanent refusal);
 * `delayMs` holds each DATA reply, so two senders overlap in time.
 */
export async function startTestSmtp(options: { port?: number; refuse?: string[]; delayMs?: number } = {}): Promise<TestSmtpServer> {
	const received: Received[] = [];
	const config: SMTPServerOptions = {
		authOptional: true,
		disabledCommands: ['STARTTLS'],
		logger: false,
		onRcptTo(address, _session, callback) {
			if (options.refuse?.includes(address.address)) {
				const err = new Error('Mailbox unavailable (test)') as Error & { responseCode: number };
				err.responseCode = 550;
				return callback(err);
			}
			callback();
		},
		onData(stream, session, callback) {
			simpleParser(stream)
				.then(async (mail) => {
					if (options.delayMs) await new Promise((r) => setTimeout(r, options.delayMs));
					received.push({ envelopeTo: session.envelope.rcptTo.map((r) => r.address), mail });
					callback();
				})
				.catch((err: Error) => callback(err));
		}
	};
	const server = new SMTPServer(config);
	await new Promise<void>((resolve, reject) => {
		server.once('error', reject);
		server.listen(options.port ?? 0, '127.0.0.1', () => resolve());
	});
	const address = server.server.address();
	const port = typeof address === 'object' && address ? address.port : 0;
	return { port, received, close: () => new Promise<void>((resolve) => server.close(() => resolve())) };
}

/** A TCP port on 127.0.0.1 that nothing listens on right now: a mail server that is down. */
export async function freePort(): Promise<number> {
	const probe = createServer();
	await new Promise<void>((resolve) => probe.listen(0, '127.0.0.1', () => resolve()));
	const address = probe.address();
	const port = typeof address === 'object' && address ? address.port : 0;
	await new Promise<void>((resolve) => probe.close(() => resolve()));
	return port;
}

/** An invented person with roles and (optionally) an e-mail address in the reserved .invalid domain (RFC 2606 2). */
export async function addPerson(db: Database, p: { username: string; roles: Role[]; email?: string | null; disabled?: boolean; kind?: 'person' | 'service'; locale?: string }): Promise<string> {
	const id = randomUUID();
	await runUnitOfWork(db, systemActor, async (uow) => {
		await uow.tx.insert(user).values({
			id,
			username: p.username,
			name: `Test ${p.username}`,
			email: p.email === undefined ? `${p.username}@mail-test.invalid` : p.email,
			kind: p.kind ?? 'person',
			locale: p.locale ?? 'en',
			disabledAt: p.disabled ? new Date() : null
		});
		if (p.roles.length > 0) await uow.tx.insert(userRole).values(p.roles.map((role) => ({ userId: id, role })));
		await uow.audit({ action: 'test.user', entityType: 'user', entityId: id, after: { username: p.username, roles: p.roles } });
	});
	return id;
}

/** One critical step of the demo process (invented): dispense sucrose. It needs a supervisor's verification. */
export const oneStepTemplate: Template = (() => {
	const t = structuredClone(demoTemplateInput) as TemplateInput;
	t.sections = t.sections.map((s) => ({ ...s, steps: s.steps.filter((st) => st.key === 'weigh_sucrose') })).filter((s) => s.steps.length > 0);
	return templateSchema.parse(t);
})();

// Sucrose: 12 L × 50 mg/mL = 600.0 g ± 0.5 % (demo template's own formula and tolerance).
export const sucroseValues = { sucrose_lot: 'T-SUC-OK', sucrose_balance: 'T-BAL6-OK', sucrose_weighed: '600.4' };

/**
 * A migrated database with one invented person per role that mail goes to (supervisor, qa, admin)
 * and an operator, addresses in .invalid (RFC 2606 2). Lighter than the demo seed, which these
 * tests do not need (only wiring.test.ts executes a batch and uses the seed).
 */
export async function mailDatabase(kind: 'pglite' | 'postgresql'): Promise<TestDatabase> {
	const t = await createTestDatabase(kind);
	for (const role of ['operator', 'supervisor', 'qa', 'admin'] as const) await addPerson(t.handle.db, { username: role, roles: [role] });
	return t;
}
