import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createHash } from 'node:crypto';
import { eq, sql } from 'drizzle-orm';
import canonicalize from 'canonicalize';
import type { Database } from '$lib/server/db/client';
import { session as sessionTable, signature, user } from '$lib/server/db/schema';
import { runUnitOfWork } from '$lib/server/work';
import { actorOf } from '$lib/server/auth/account';
import { AuthError } from '$lib/server/auth/errors';
import { createUserSession, validateSessionToken } from '$lib/server/auth/session';
import type { SessionInfo, SessionUser } from '$lib/server/auth/types';
import { beginAssertion, beginRegistration, finishRegistration, type RelyingParty } from '$lib/server/auth/passkey';
import { hashContent, signRecord, verifySigner, type SignatureCredentials } from '$lib/server/signatures/ceremony';
import { isSignatureBound, listSignatures } from '$lib/server/signatures/query';
import { signAcknowledgement } from '$lib/server/signatures/acknowledgement';
import { createAccount } from '$lib/server/users/admin';
import { databaseKinds } from '../support/databases';
import { auditHead, auditSince, DEMO_PASSWORD, seededDatabase, sessionUser } from './support/identity';
import { SoftAuthenticator } from './support/soft-authenticator';

const rp: RelyingParty = { id: 'localhost', name: 'Rimebook test', origin: 'http://localhost:4400' };

async function freshSession(db: Database, u: SessionUser): Promise<SessionInfo> {
	const { token } = await createUserSession(db, u.id, 'password');
	const v = await validateSessionToken(db, token);
	if ('end' in v) throw new Error('session did not validate');
	return v.session;
}

async function reload(db: Database, s: SessionInfo): Promise<SessionInfo> {
	const [row] = await db.select().from(sessionTable).where(eq(sessionTable.id, s.id));
	return { ...s, firstSignedAt: row.firstSignedAt };
}

async function statusOf(p: Promise<unknown>): Promise<string> {
	try {
		await p;
		return 'ok';
	} catch (err) {
		if (err instanceof AuthError) return `${err.status} ${err.code}`;
		throw err;
	}
}

/** A stand-in for a later feature's record: the signature must commit with it or not at all. */
async function signThing(db: Database, u: SessionUser, s: SessionInfo, credentials: SignatureCredentials, content: unknown, meaning: 'approved' | 'performed' = 'approved') {
	const proof = await verifySigner(db, { signer: u, session: s, meaning, credentials, address: '10.9.0.1', relyingParty: rp });
	return runUnitOfWork(db, actorOf(u), (uow) => signRecord(uow, proof, { meaning, entityType: 'test-record', entityId: 'rec-1', content }));
}

describe.each(databaseKinds)('signing ceremony on %s', (kind) => {
	let t: Awaited<ReturnType<typeof seededDatabase>>;
	let db: Database;
	let qa: SessionUser;
	beforeAll(async () => {
		t = await seededDatabase(kind);
		db = t.handle.db;
		qa = await sessionUser(db, 'qa');
	});
	afterAll(async () => t?.dispose());

	// 21 CFR 11.200(a)(1)(i): first signing of a continuous session with ID and password; later ones with the password.
	test('the first signing needs username and password, a later one the password alone', async () => {
		let s = await freshSession(db, qa);
		expect(await statusOf(signThing(db, qa, s, { method: 'password', password: DEMO_PASSWORD }, { v: 1 }))).toBe('400 username-required');
		const first = await signThing(db, qa, s, { method: 'password', username: 'QA', password: DEMO_PASSWORD }, { v: 1 });
		expect(first.method).toBe('password');
		s = await reload(db, s);
		expect(s.firstSignedAt).not.toBeNull();
		const later = await signThing(db, qa, s, { method: 'password', password: DEMO_PASSWORD }, { v: 2 });
		expect(later.id).not.toBe(first.id);
		// A new session is a new continuous session: the username is asked again (11.200(a)(1)(ii)).
		const next = await freshSession(db, qa);
		expect(await statusOf(signThing(db, qa, next, { method: 'password', password: DEMO_PASSWORD }, { v: 3 }))).toBe('400 username-required');
	});

	// 11.50(a), 11.70: printed name, UTC time, zone, meaning, method and the SHA-256 of the RFC 8785 content.
	test('the signature row holds the manifestation facts and the hash of the canonical content', async () => {
		const s = await freshSession(db, qa);
		const content = { b: [1, 'two', { z: true, a: null }], a: 1e21, text: 'Lösung €' };
		const sig = await signThing(db, qa, s, { method: 'password', username: 'qa', password: DEMO_PASSWORD }, content);
		// Reference: the `canonicalize` package by an RFC 8785 author, then node:crypto SHA-256.
		const expected = createHash('sha256').update(canonicalize(content)!).digest('hex');
		expect(sig.contentHash).toBe(expected);
		const [row] = await db.select().from(signature).where(eq(signature.id, sig.id));
		expect(row).toMatchObject({ signerId: qa.id, printedName: 'Priya Halden', meaning: 'approved', method: 'password', timeZone: 'UTC', contentHash: expected });
		expect(new Date(row.at).getTime()).toBeGreaterThan(Date.now() - 60_000);
		expect(isSignatureBound(row, content)).toBe(true);
		expect(isSignatureBound(row, { ...content, a: 2 })).toBe(false);
		const [event] = (await auditSince(db, row.auditSeq! - 1)).filter((e) => e.seq === row.auditSeq);
		expect(event).toMatchObject({ action: 'signature.sign', actorId: qa.id, entityType: 'test-record', after: { signatureId: sig.id, contentHash: expected } });
		expect(new Date(event.at).getTime()).toBe(new Date(row.at).getTime());
	});

	// 11.70 with the design's one write path: if the caller's record fails, the signature is not kept.
	test('a signature rolls back with the unit of work it was made in', async () => {
		const s = await freshSession(db, qa);
		const proof = await verifySigner(db, { signer: qa, session: s, meaning: 'approved', credentials: { method: 'password', username: 'qa', password: DEMO_PASSWORD }, address: '10.9.0.1' });
		const before = (await listSignatures(db, 'test-record', 'rollback')).length;
		await expect(
			runUnitOfWork(db, actorOf(qa), async (uow) => {
				await signRecord(uow, proof, { meaning: 'approved', entityType: 'test-record', entityId: 'rollback', content: {} });
				throw new Error('the record write failed');
			})
		).rejects.toThrow('the record write failed');
		expect(await listSignatures(db, 'test-record', 'rollback')).toHaveLength(before);
		expect((await reload(db, s)).firstSignedAt).toBeNull();
		// The proof was spent: a second use is refused (every signature needs its own ceremony).
		await expect(runUnitOfWork(db, actorOf(qa), (uow) => signRecord(uow, proof, { meaning: 'approved', entityType: 'test-record', entityId: 'rollback', content: {} }))).rejects.toThrow(/already used/);
	});

	// 11.200(a)(2): only the owner can use a signature; 11.300(d): misuse is audited; nothing is signed.
	test('a signature naming another user is refused with 403 and audited, nothing signed', async () => {
		const s = await freshSession(db, qa);
		const head = await auditHead(db);
		expect(await statusOf(signThing(db, qa, s, { method: 'password', username: 'supervisor', password: DEMO_PASSWORD }, { v: 1 }))).toBe('403 not-yourself');
		const events = await auditSince(db, head);
		expect(events.map((e) => e.action)).toEqual(['signature.refused']);
		expect(await db.select().from(signature).where(sql`${signature.auditSeq} > ${head}`)).toHaveLength(0);
	});

	// 11.300(d), finding 39: a signing short of its username or password is refused AND audited, not counted.
	test('a missing username or password is an audited refusal that does not count toward the lockout', async () => {
		const s = await freshSession(db, qa);
		const head = await auditHead(db);
		expect(await statusOf(signThing(db, qa, s, { method: 'password', password: DEMO_PASSWORD }, { v: 1 }))).toBe('400 username-required');
		expect(await statusOf(signThing(db, qa, s, { method: 'password', username: 'qa', password: '' }, { v: 1 }))).toBe('400 invalid-input');
		const events = await auditSince(db, head);
		expect(events.map((e) => e.action)).toEqual(['signature.refused', 'signature.refused']);
		expect(events.map((e) => e.reason)).toEqual(['The first signature of a session needs your username and password.', 'Enter your password.']);
		expect(events[0]).toMatchObject({ entityId: qa.id, after: { username: 'qa', outcome: 'refused' } });
		expect(await db.select().from(signature).where(sql`${signature.auditSeq} > ${head}`)).toHaveLength(0);
		// Refusals are not failures: the right credentials still sign at once.
		expect((await signThing(db, qa, s, { method: 'password', username: 'qa', password: DEMO_PASSWORD }, { v: 1 })).method).toBe('password');
	});

	// 11.300(d): a wrong password while signing counts toward the lockout; the fifth locks (423).
	test('wrong signing passwords count toward the lockout', async () => {
		const op = await sessionUser(db, 'operator');
		const s = await freshSession(db, op);
		const codes: string[] = [];
		for (let i = 0; i < 5; i++) codes.push(await statusOf(signThing(db, op, s, { method: 'password', username: 'operator', password: `wrong-${i}-pass` }, { v: i }, 'performed')));
		expect(codes).toEqual(['401 bad-credentials', '401 bad-credentials', '401 bad-credentials', '401 bad-credentials', '423 locked']);
		expect(await statusOf(signThing(db, op, s, { method: 'password', username: 'operator', password: DEMO_PASSWORD }, { v: 9 }, 'performed'))).toBe('423 locked');
		const [row] = await db.select({ lockedUntil: user.lockedUntil }).from(user).where(eq(user.id, op.id));
		expect(row.lockedUntil).not.toBeNull();
	});

	// design.md: admins sign no GMP record; 11.200(a)(3). Service accounts and token requests never sign.
	test('an admin giving a GMP meaning, a service account and a request without session are refused', async () => {
		const admin = await sessionUser(db, 'admin');
		const s = await freshSession(db, admin);
		expect(await statusOf(signThing(db, admin, s, { method: 'password', username: 'admin', password: DEMO_PASSWORD }, {}))).toBe('403 admin-gmp');
		// The admin may still sign their own accountability acknowledgement (not a GMP record).
		const ack = await signAcknowledgement(db, { signer: admin, session: s, credentials: { method: 'password', username: 'admin', password: DEMO_PASSWORD }, address: '10.9.0.2', relyingParty: rp, statement: 'I understand.', locale: 'en' });
		expect(ack.meaning).toBe('acknowledged');

		const { id } = await createAccount(db, admin, { username: 'logger-sa', name: 'Data logger LYO-01', email: null, kind: 'service', roles: ['operator'] }, 'Cycle log upload');
		const svc = await sessionUser(db, 'logger-sa');
		expect(svc.id).toBe(id);
		const svcSession = await freshSession(db, svc);
		expect(await statusOf(signThing(db, svc, svcSession, { method: 'password', username: 'logger-sa', password: 'whatever-password' }, {}, 'performed'))).toBe('403 service-account');
		expect(await statusOf(verifySigner(db, { signer: qa, session: null, meaning: 'approved', credentials: { method: 'password', username: 'qa', password: DEMO_PASSWORD }, address: 'x' }))).toBe('401 no-session');
	});

	// 11.200(a)(1), W3C WebAuthn §7.2: a later signing with a passkey (UV required); replayed and foreign challenges fail.
	test('a passkey signs a later signature; replayed, foreign, non-UV and first-in-session attempts are refused', async () => {
		const sup = await sessionUser(db, 'supervisor');
		let s = await freshSession(db, sup);
		const authenticator = new SoftAuthenticator(rp.id, rp.origin);
		const creation = await beginRegistration(db, sup, s.id, rp);
		expect(creation.authenticatorSelection?.userVerification).toBe('required');
		await finishRegistration(db, sup, s.id, authenticator.register(creation), 'Test key', rp);

		const signWithPasskey = (session: SessionInfo, response: ReturnType<SoftAuthenticator['assert']>) => signThing(db, sup, session, { method: 'passkey', response }, { step: 'x' }, 'performed');
		// First in session: the passkey is not enough.
		const early = await beginAssertion(db, 'sign', { userId: sup.id, sessionId: s.id }, rp);
		expect(await statusOf(signWithPasskey(s, authenticator.assert(early)))).toBe('400 passkey-not-allowed');
		await signThing(db, sup, s, { method: 'password', username: 'supervisor', password: DEMO_PASSWORD }, { step: 'first' }, 'performed');
		s = await reload(db, s);

		const options = await beginAssertion(db, 'sign', { userId: sup.id, sessionId: s.id }, rp);
		expect(options.userVerification).toBe('required');
		const response = authenticator.assert(options);
		const sig = await signWithPasskey(s, response);
		expect(sig.method).toBe('passkey');
		// The same assertion again: its challenge was used up.
		expect(await statusOf(signWithPasskey(s, response))).toBe('400 challenge');
		// A challenge issued to another session of the same person is foreign here.
		const other = await freshSession(db, sup);
		const foreign = await beginAssertion(db, 'sign', { userId: sup.id, sessionId: other.id }, rp);
		expect(await statusOf(signWithPasskey(s, authenticator.assert(foreign)))).toBe('400 challenge');
		// A sign-in challenge used for signing is foreign too.
		const signIn = await beginAssertion(db, 'sign-in', { sessionId: s.id }, rp);
		expect(await statusOf(signWithPasskey(s, authenticator.assert(signIn)))).toBe('400 challenge');
		// Without user verification (UV flag clear) the assertion is refused.
		const noUv = await beginAssertion(db, 'sign', { userId: sup.id, sessionId: s.id }, rp);
		expect(await statusOf(signWithPasskey(s, authenticator.assert(noUv, { userVerified: false })))).toBe('401 passkey-invalid');
		// From another origin (phishing site) it is refused.
		const phish = await beginAssertion(db, 'sign', { userId: sup.id, sessionId: s.id }, rp);
		expect(await statusOf(signWithPasskey(s, authenticator.assert(phish, { origin: 'http://evil.example' })))).toBe('401 passkey-invalid');
		// Someone else's passkey cannot sign for the supervisor.
		const qaSession = await freshSession(db, qa);
		const qaKey = new SoftAuthenticator(rp.id, rp.origin);
		await finishRegistration(db, qa, qaSession.id, qaKey.register(await beginRegistration(db, qa, qaSession.id, rp)), 'QA key', rp);
		const stolen = await beginAssertion(db, 'sign', { userId: sup.id, sessionId: s.id }, rp);
		expect(await statusOf(signWithPasskey(s, qaKey.assert(stolen)))).toBe('403 not-yourself');
	});

	// 11.70: signatures cannot be removed or altered (append-only triggers, migration 0003).
	test('a stored signature cannot be updated or deleted', async () => {
		const s = await freshSession(db, qa);
		const sig = await signThing(db, qa, s, { method: 'password', username: 'qa', password: DEMO_PASSWORD }, { keep: true });
		await expect(db.update(signature).set({ printedName: 'Someone Else' }).where(eq(signature.id, sig.id))).rejects.toThrow();
		await expect(db.delete(signature).where(eq(signature.id, sig.id))).rejects.toThrow();
		const [row] = await db.select().from(signature).where(eq(signature.id, sig.id));
		expect(row.printedName).toBe('Priya Halden');
	});

	test('hashContent is SHA-256 of RFC 8785 text: key order does not matter, values do', () => {
		expect(hashContent({ a: 1, b: 2 })).toBe(hashContent({ b: 2, a: 1 }));
		expect(hashContent({ a: 1 })).not.toBe(hashContent({ a: '1' }));
		// RFC 8785 §3.2.2.3 number serialisation: 1e21 canonicalises as "1e+21".
		expect(hashContent(1e21)).toBe(createHash('sha256').update('1e+21').digest('hex'));
	});
});
