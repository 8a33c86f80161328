import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { eq, sql } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { apiToken, session, user } from '$lib/server/db/schema';
import { AuthError } from '$lib/server/auth/errors';
import { verifyPasswordSignIn, startSession, verifyPasskeySignIn } from '$lib/server/auth/signin';
import { authenticateApiToken } from '$lib/server/auth/token';
import { hashToken, validateSessionToken } from '$lib/server/auth/session';
import { beginAssertion, beginRegistration, finishRegistration, removePasskey, type RelyingParty } from '$lib/server/auth/passkey';
import { createAccount, resetPassword, setAccountDisabled, updateAccount } from '$lib/server/users/admin';
import { changeOwnPassword } from '$lib/server/users/password';
import { createApiToken, revokeApiToken } from '$lib/server/users/tokens';
import { databaseKinds } from '../support/databases';
import { auditHead, auditSince, DEMO_PASSWORD, seededDatabase, sessionUser } from './support/identity';
import { SoftAuthenticator } from './support/soft-authenticator';

const rp: RelyingParty = { id: 'localhost', name: 'Rimebook test', origin: 'http://localhost:4400' };

async function statusOf(p: Promise<unknown>): Promise<string> {
	try {
		await p;
		return 'ok';
	} catch (err) {
		if (err instanceof AuthError) return `${err.status} ${err.code}`;
		throw err;
	}
}

describe.each(databaseKinds)('user administration, tokens and passkey sign-in on %s', (kind) => {
	let t: Awaited<ReturnType<typeof seededDatabase>>;
	let db: Database;
	beforeAll(async () => {
		t = await seededDatabase(kind);
		db = t.handle.db;
	});
	afterAll(async () => t?.dispose());

	// 11.100(a), 11.300(a): accounts are created with a reason; a username is never reused, even disabled.
	test('create, first-sign-in password change, disable; the username is never reused', async () => {
		const admin = await sessionUser(db, 'admin');
		const head = await auditHead(db);
		const created = await createAccount(db, admin, { username: 'Nadia.Voss', name: 'Nadia Voss', email: 'nadia.voss@eskerdal.example', kind: 'person', roles: ['operator'] }, 'New starter, training record TR-118');
		expect(created.temporaryPassword).toMatch(/^[a-z]+(-[a-z]+){4}$/);
		const [event] = await auditSince(db, head);
		expect(event).toMatchObject({ action: 'user.create', actorId: admin.id, actorName: 'Sam Whitcombe', reason: 'New starter, training record TR-118', after: { username: 'nadia.voss', roles: ['operator'] } });
		expect(JSON.stringify(event)).not.toContain(created.temporaryPassword!);

		// NIST SP 800-63B-4 §3.1.1.2: a password set by someone else is changed at first sign-in.
		const account = await verifyPasswordSignIn(db, { username: 'nadia.voss', password: created.temporaryPassword!, address: '10.5.0.1' });
		expect(account.mustChangePassword).toBe(true);
		const nadia = { ...(await sessionUser(db, 'nadia.voss')), mustChangePassword: true };
		expect(await statusOf(changeOwnPassword(db, nadia, null, { current: created.temporaryPassword!, next: 'password1234', address: '10.5.0.1' }))).toBe('400 password-rules');
		expect(await statusOf(changeOwnPassword(db, nadia, null, { current: created.temporaryPassword!, next: 'nadia.voss-is-me-2026', address: '10.5.0.1' }))).toBe('400 password-rules');
		expect(await statusOf(changeOwnPassword(db, nadia, null, { current: 'not-the-current-one', next: 'quiet lantern orbit meadow', address: '10.5.0.1' }))).toBe('401 bad-credentials');
		await changeOwnPassword(db, nadia, null, { current: created.temporaryPassword!, next: 'quiet lantern orbit meadow', address: '10.5.0.1' });
		expect((await verifyPasswordSignIn(db, { username: 'nadia.voss', password: 'quiet lantern orbit meadow', address: '10.5.0.1' })).mustChangePassword).toBe(false);

		await setAccountDisabled(db, admin, created.id, true, 'Contract ended');
		expect(await statusOf(createAccount(db, admin, { username: 'nadia.voss', name: 'Someone Else', email: null, kind: 'person', roles: [] }, 'Reuse attempt'))).toBe('409 conflict');
		expect(await db.select().from(user).where(eq(user.username, 'nadia.voss'))).toHaveLength(1);
	});

	// Annex 11, 12.3: grants and removals of rights are logged with before, after and reason.
	test('role changes are audited with grants, removals and the reason; an admin cannot remove their own admin role', async () => {
		const admin = await sessionUser(db, 'admin');
		const op = await sessionUser(db, 'operator');
		const head = await auditHead(db);
		await updateAccount(db, admin, op.id, { name: 'Tomas Reyvik', email: null, roles: ['supervisor'] }, 'Promoted, CR-2026-031');
		const [event] = await auditSince(db, head);
		expect(event).toMatchObject({ action: 'user.update', before: { roles: ['operator'] }, after: { roles: ['supervisor'], rolesGranted: ['supervisor'], rolesRemoved: ['operator'] }, reason: 'Promoted, CR-2026-031' });
		expect((await sessionUser(db, 'operator')).roles).toEqual(['supervisor']);
		expect(await statusOf(updateAccount(db, admin, admin.id, { name: admin.name, email: null, roles: ['qa'] }, 'Oops'))).toBe('409 conflict');
	});

	// ASVS V7.4.3: a reset ends the person's sessions and forces a change at next sign-in.
	test('a password reset ends sessions and forces a change', async () => {
		const admin = await sessionUser(db, 'admin');
		const account = await verifyPasswordSignIn(db, { username: 'inspector', password: DEMO_PASSWORD, address: '10.5.0.2' });
		const s = await startSession(db, account, 'password', '10.5.0.2');
		const { temporaryPassword } = await resetPassword(db, admin, account.id, 'Forgot password, identity checked in person');
		expect('end' in (await validateSessionToken(db, s.token))).toBe(true);
		expect(await statusOf(verifyPasswordSignIn(db, { username: 'inspector', password: DEMO_PASSWORD, address: '10.5.0.2' }))).toBe('401 bad-credentials');
		expect((await verifyPasswordSignIn(db, { username: 'inspector', password: temporaryPassword, address: '10.5.0.2' })).mustChangePassword).toBe(true);
	});

	// 11.300(c), ASVS V7.2.4: tokens shown once, stored hashed, expiring, revocable; only for service accounts.
	test('API tokens: hashed, limited to granted permissions, revocable, expiring, stopped by disabling', async () => {
		const admin = await sessionUser(db, 'admin');
		const { id: svcId } = await createAccount(db, admin, { username: 'lyo01-logger', name: 'LYO-01 data logger', email: null, kind: 'service', roles: ['operator'] }, 'Cycle log integration');
		expect(await statusOf(createApiToken(db, admin, { userId: svcId, label: 'x', permissions: ['batch.release'], days: 30 }, 'Too much'))).toBe('400 invalid-input');
		const qa = await sessionUser(db, 'qa');
		expect(await statusOf(createApiToken(db, admin, { userId: qa.id, label: 'x', permissions: ['batch.read'], days: 30 }, 'Person'))).toBe('409 conflict');
		const created = await createApiToken(db, admin, { userId: svcId, label: 'Logger uploads', permissions: ['cycle.upload'], days: 30 }, 'Cycle log integration');
		expect(created.token.startsWith('rbk_')).toBe(true);
		const [row] = await db.select().from(apiToken).where(eq(apiToken.id, created.id));
		expect(row.tokenHash).toBe(hashToken(created.token));
		expect(JSON.stringify(row)).not.toContain(created.token);
		const svc = await authenticateApiToken(db, created.token);
		expect(svc).toMatchObject({ username: 'lyo01-logger', kind: 'service', tokenPermissions: ['cycle.upload'] });
		expect(await authenticateApiToken(db, created.token + 'x')).toBeNull();

		await db.update(apiToken).set({ expiresAt: sql`now() - interval '1 second'` }).where(eq(apiToken.id, created.id));
		expect(await authenticateApiToken(db, created.token)).toBeNull();
		const second = await createApiToken(db, admin, { userId: svcId, label: 'Logger 2', permissions: ['cycle.upload'], days: 30 }, 'Rotation');
		// Finding 35 (11.10(d)): a token id posted on another account's page revokes nothing.
		expect(await statusOf(revokeApiToken(db, admin, { userId: qa.id, tokenId: second.id }, 'Wrong page'))).toBe('404 not-found');
		expect(await authenticateApiToken(db, second.token)).toMatchObject({ username: 'lyo01-logger' });
		await revokeApiToken(db, admin, { userId: svcId, tokenId: second.id }, 'Rotated');
		expect(await authenticateApiToken(db, second.token)).toBeNull();
		const third = await createApiToken(db, admin, { userId: svcId, label: 'Logger 3', permissions: ['cycle.upload'], days: 30 }, 'Rotation');
		await setAccountDisabled(db, admin, svcId, true, 'Logger replaced');
		expect(await authenticateApiToken(db, third.token)).toBeNull();
		// Service accounts have no password, so they can never sign in interactively.
		expect(await statusOf(verifyPasswordSignIn(db, { username: 'lyo01-logger', password: 'anything-at-all', address: '10.5.0.3' }))).toBe('401 bad-credentials');
	});

	// W3C WebAuthn §7.2 with UV required; ASVS V6.5: passkey sign-in; replay and foreign nonce fail; removal is audited.
	test('passkey sign-in with a bound challenge; replay and foreign nonce fail; a removed passkey no longer works', async () => {
		const qa = await sessionUser(db, 'qa');
		const account = await verifyPasswordSignIn(db, { username: 'qa', password: DEMO_PASSWORD, address: '10.6.0.1' });
		const { session: s } = await startSession(db, account, 'password', '10.6.0.1');
		const key = new SoftAuthenticator(rp.id, rp.origin);
		const head = await auditHead(db);
		await finishRegistration(db, qa, s.id, key.register(await beginRegistration(db, qa, s.id, rp)), 'Line tablet', rp);
		expect((await auditSince(db, head)).map((e) => e.action)).toEqual(['passkey.register']);

		// A registration response that was not user-verified is refused.
		const other = new SoftAuthenticator(rp.id, rp.origin);
		expect(await statusOf(finishRegistration(db, qa, s.id, other.register(await beginRegistration(db, qa, s.id, rp), { userVerified: false }), 'No UV', rp))).toBe('401 passkey-invalid');

		const nonce = hashToken('browser-nonce-1');
		const options = await beginAssertion(db, 'sign-in', { sessionId: nonce }, rp);
		const response = key.assert(options);
		const signedIn = await verifyPasskeySignIn(db, { response, nonceHash: nonce, address: '10.6.0.2' }, rp);
		expect(signedIn.username).toBe('qa');
		expect(await statusOf(verifyPasskeySignIn(db, { response, nonceHash: nonce, address: '10.6.0.2' }, rp))).toBe('400 challenge');
		const elsewhere = await beginAssertion(db, 'sign-in', { sessionId: hashToken('browser-nonce-2') }, rp);
		expect(await statusOf(verifyPasskeySignIn(db, { response: key.assert(elsewhere), nonceHash: nonce, address: '10.6.0.2' }, rp))).toBe('400 challenge');

		await removePasskey(db, qa, key.id);
		const after = await beginAssertion(db, 'sign-in', { sessionId: nonce }, rp);
		expect(await statusOf(verifyPasskeySignIn(db, { response: key.assert(after), nonceHash: nonce, address: '10.6.0.2' }, rp))).toBe('401 passkey-invalid');
		expect(await db.select().from(session).where(eq(session.userId, qa.id))).not.toHaveLength(0);
	});
});
