import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { eq, sql } from 'drizzle-orm';
import { session, setting, signInAttempt, user } from '$lib/server/db/schema';
import { admitChallengeRequest } from '$lib/server/auth/lockout';
import { pseudonymOf, PSEUDONYM_KEY_SETTING } from '$lib/server/auth/pseudonym';
import type { Database } from '$lib/server/db/client';
import { startSession, verifyPasswordSignIn } from '$lib/server/auth/signin';
import { hashToken, validateSessionToken } from '$lib/server/auth/session';
import { AuthError } from '$lib/server/auth/errors';
import { unlockAccount, setAccountDisabled } from '$lib/server/users/admin';
import { databaseKinds } from '../support/databases';
import { auditHead, auditSince, DEMO_PASSWORD, seededDatabase, sessionUser } from './support/identity';

async function codeOf(p: Promise<unknown>): Promise<string> {
	try {
		await p;
		return 'ok';
	} catch (err) {
		if (err instanceof AuthError) return `${err.status} ${err.code}`;
		throw err;
	}
}

describe.each(databaseKinds)('sign-in on %s', (kind) => {
	let t: Awaited<ReturnType<typeof seededDatabase>>;
	let db: Database;
	beforeAll(async () => {
		t = await seededDatabase(kind);
		db = t.handle.db;
	});
	afterAll(async () => t?.dispose());

	// 21 CFR 11.300(a), 11.10(d): only the right ID/password pair admits; the demo accounts sign in.
	test('every demo account signs in with the demo password', async () => {
		for (const name of ['author', 'operator', 'operator2', 'supervisor', 'qa', 'inspector', 'admin']) {
			const account = await verifyPasswordSignIn(db, { username: name, password: DEMO_PASSWORD, address: '10.0.0.1' });
			expect(account.username).toBe(name);
		}
	});

	// ASVS V6.3.8 / 11.300(d): wrong password and unknown name give the same answer; both are audited.
	test('a wrong password and an unknown username are both 401 bad-credentials, and audited', async () => {
		const head = await auditHead(db);
		expect(await codeOf(verifyPasswordSignIn(db, { username: 'qa', password: 'not-the-password', address: '10.0.0.2' }))).toBe('401 bad-credentials');
		expect(await codeOf(verifyPasswordSignIn(db, { username: 'nobody-here', password: 'not-the-password', address: '10.0.0.2' }))).toBe('401 bad-credentials');
		const events = await auditSince(db, head);
		expect(events.map((e) => e.action)).toEqual(['auth.sign-in-failed', 'auth.sign-in-failed']);
		// Unknown names: the system is the actor; the event records a keyed pseudonym of the name tried
		// (never the name as typed: finding 48) and the address. A real account's name is no secret.
		expect(events[1]).toMatchObject({ actorId: null, entityId: null, after: { address: '10.0.0.2', knownAccount: false } });
		expect(events[1].after).not.toHaveProperty('username');
		expect(events[0].entityId).not.toBeNull();
		expect(events[0].after).toMatchObject({ username: 'qa' });
	});

	// Finding 48: a password typed into the username field never reaches the append-only ledger;
	// the pseudonym is HMAC-SHA-256 (RFC 2104) under the site key, so one name maps to one pseudonym.
	test('an unknown name is audited as a keyed pseudonym, stable per name, and still locks', async () => {
		const typed = 'correct-horse-battery-9';
		const head = await auditHead(db);
		const codes: string[] = [];
		for (let i = 0; i < 6; i++) codes.push(await codeOf(verifyPasswordSignIn(db, { username: typed, password: `wrong-${i}-password`, address: `10.7.0.${i}` })));
		expect(codes.slice(4)).toEqual(['423 locked', '423 locked']);
		const events = await auditSince(db, head);
		expect(events.map((e) => e.action)).toEqual([...Array(5).fill('auth.sign-in-failed'), 'user.lock', 'auth.sign-in-refused']);
		const rows = await db.execute(sql`select canonical from audit_event where seq > ${head}`);
		expect(JSON.stringify(rows)).not.toContain(typed);
		const [keyRow] = await db.select({ value: setting.value }).from(setting).where(eq(setting.key, PSEUDONYM_KEY_SETTING));
		const expected = pseudonymOf(Buffer.from(keyRow.value as string, 'hex'), typed);
		expect(expected).toMatch(/^hmac-sha256:[0-9a-f]{32}$/);
		for (const e of events) expect(e.after).toMatchObject({ usernameKeyed: expected });
		// Another name, another pseudonym.
		expect(pseudonymOf(Buffer.from(keyRow.value as string, 'hex'), 'ghost.account')).not.toBe(expected);
	});

	// RFC 4231 test case 2 (HMAC-SHA-256, key "Jefe"): the pseudonym is that MAC's first 128 bits.
	test('pseudonymOf is HMAC-SHA-256 truncated to 128 bits (RFC 4231, test case 2)', () => {
		expect(pseudonymOf(Buffer.from('Jefe'), 'what do ya want for nothing?')).toBe('hmac-sha256:5bdcc146bf60754e6a042426089575c7');
	});

	// Finding 28; NIST SP 800-63B-4 §3.2.2: anonymous passkey challenges are rate limited per address.
	test('an address asking for too many passkey challenges gets 429, audited once; other addresses are unaffected', async () => {
		const policy = { attempts: 5, windowMinutes: 15, lockMinutes: 30, addressFailures: 20, addressChallenges: 3 };
		const head = await auditHead(db);
		const codes: string[] = [];
		for (let i = 0; i < 5; i++) codes.push(await codeOf(admitChallengeRequest(db, '198.51.100.7', policy)));
		expect(codes).toEqual(['ok', 'ok', 'ok', '429 rate-limited', '429 rate-limited']);
		expect(await codeOf(admitChallengeRequest(db, '198.51.100.8', policy))).toBe('ok');
		const refused = (await auditSince(db, head)).filter((e) => e.action === 'auth.sign-in-refused');
		expect(refused).toHaveLength(1);
		expect(refused[0].after).toMatchObject({ address: '198.51.100.7', outcome: 'rate-limited' });
		// An address over its failure limit is refused a challenge too.
		for (let i = 0; i < 20; i++) await codeOf(verifyPasswordSignIn(db, { username: `spray-c-${i}`, password: 'wrong-password-1', address: '198.51.100.9' }));
		expect(await codeOf(admitChallengeRequest(db, '198.51.100.9', policy))).toBe('429 rate-limited');
	});

	// 11.300(d); NIST SP 800-63B-4 §3.2.2: 5 failures in 15 min lock for 30 min (configured defaults).
	test('five failures lock the account (423), even with the right password; the lock is audited; an admin unlock ends it', async () => {
		const head = await auditHead(db);
		const codes: string[] = [];
		for (let i = 0; i < 5; i++) codes.push(await codeOf(verifyPasswordSignIn(db, { username: 'operator2', password: `wrong-${i}-password`, address: `10.1.0.${i}` })));
		expect(codes).toEqual(['401 bad-credentials', '401 bad-credentials', '401 bad-credentials', '401 bad-credentials', '423 locked']);
		expect(await codeOf(verifyPasswordSignIn(db, { username: 'operator2', password: DEMO_PASSWORD, address: '10.1.0.9' }))).toBe('423 locked');
		const actions = (await auditSince(db, head)).map((e) => e.action);
		expect(actions.filter((a) => a === 'user.lock')).toHaveLength(1);
		expect(actions.at(-1)).toBe('auth.sign-in-refused');
		const [row] = await db.select({ lockedUntil: user.lockedUntil }).from(user).where(eq(user.username, 'operator2'));
		const minutes = (row.lockedUntil!.getTime() - Date.now()) / 60_000;
		expect(minutes).toBeGreaterThan(29);
		expect(minutes).toBeLessThanOrEqual(30.1);

		const admin = await sessionUser(db, 'admin');
		const target = await sessionUser(db, 'operator2');
		await unlockAccount(db, admin, target.id, 'Identity confirmed by phone, ticket 4711');
		const unlock = (await auditSince(db, head)).find((e) => e.action === 'user.unlock');
		expect(unlock).toMatchObject({ actorId: admin.id, reason: 'Identity confirmed by phone, ticket 4711' });
		// Earlier failures no longer count after the unlock: one more failure does not re-lock.
		expect(await codeOf(verifyPasswordSignIn(db, { username: 'operator2', password: 'wrong-again-pass', address: '10.1.0.10' }))).toBe('401 bad-credentials');
		expect(await codeOf(verifyPasswordSignIn(db, { username: 'operator2', password: DEMO_PASSWORD, address: '10.1.0.10' }))).toBe('ok');
	});

	// ASVS V6.3.8: a name that belongs to nobody locks the same way, so 423 reveals nothing.
	test('an unknown username locks after five failures exactly like a real one', async () => {
		const codes: string[] = [];
		for (let i = 0; i < 6; i++) codes.push(await codeOf(verifyPasswordSignIn(db, { username: 'ghost.account', password: `wrong-${i}-password`, address: `10.2.0.${i}` })));
		expect(codes.slice(3)).toEqual(['401 bad-credentials', '423 locked', '423 locked']);
	});

	// NIST SP 800-63B-4 §3.2.2 (rate limiting) per client address: 4 × 5 = 20 failures in the window → 429.
	test('one address that fails too often gets 429, audited once, and other addresses are unaffected', async () => {
		const head = await auditHead(db);
		for (let i = 0; i < 20; i++) await codeOf(verifyPasswordSignIn(db, { username: `spray-${i}`, password: 'wrong-password-1', address: '192.0.2.66' }));
		expect(await codeOf(verifyPasswordSignIn(db, { username: 'qa', password: DEMO_PASSWORD, address: '192.0.2.66' }))).toBe('429 rate-limited');
		expect(await codeOf(verifyPasswordSignIn(db, { username: 'qa', password: DEMO_PASSWORD, address: '192.0.2.66' }))).toBe('429 rate-limited');
		expect(await codeOf(verifyPasswordSignIn(db, { username: 'qa', password: DEMO_PASSWORD, address: '192.0.2.67' }))).toBe('ok');
		const refused = (await auditSince(db, head)).filter((e) => e.action === 'auth.sign-in-refused');
		expect(refused).toHaveLength(1);
	});

	// ASVS V7.2.4: a new random token at each sign-in, stored only as its SHA-256.
	test('a session stores SHA-256(token), never the token, and each sign-in gets a new one', async () => {
		const account = await verifyPasswordSignIn(db, { username: 'qa', password: DEMO_PASSWORD, address: '10.3.0.1' });
		const a = await startSession(db, account, 'password', '10.3.0.1');
		const b = await startSession(db, account, 'password', '10.3.0.1');
		expect(a.token).not.toBe(b.token);
		expect(a.token).toMatch(/^[A-Za-z0-9_-]{43}$/); // 32 random bytes, base64url
		const ids = (await db.select({ id: session.id }).from(session)).map((r) => r.id);
		expect(ids).toContain(hashToken(a.token));
		expect(ids).not.toContain(a.token);
		const valid = await validateSessionToken(db, a.token);
		expect('user' in valid && valid.user.username).toBe('qa');
		expect(await validateSessionToken(db, hashToken(a.token))).toEqual({ end: 'idle' });
	});

	// ASVS V7.3.1 / NIST SP 800-63B-4 §2.3.3: idle timeout 15 min; absolute limit 12 h.
	test('a session ends after 15 idle minutes and after 12 hours whatever the activity', async () => {
		const account = await verifyPasswordSignIn(db, { username: 'supervisor', password: DEMO_PASSWORD, address: '10.3.0.2' });
		const idle = await startSession(db, account, 'password', '10.3.0.2');
		const now = Date.now();
		expect('user' in (await validateSessionToken(db, idle.token, new Date(now + 14 * 60_000)))).toBe(true);
		// The check at +14 min moved the idle deadline: +28 min is 14 idle minutes later, still valid.
		expect('user' in (await validateSessionToken(db, idle.token, new Date(now + 28 * 60_000)))).toBe(true);
		await db.update(session).set({ expiresAt: new Date(Date.now() - 1000) }).where(eq(session.id, hashToken(idle.token)));
		expect(await validateSessionToken(db, idle.token)).toEqual({ end: 'idle' });

		const long = await startSession(db, account, 'password', '10.3.0.2');
		await db.update(session).set({ createdAt: new Date(Date.now() - 12 * 3600_000 - 1000) }).where(eq(session.id, hashToken(long.token)));
		expect(await validateSessionToken(db, long.token)).toEqual({ end: 'absolute' });
		expect(await db.select().from(session).where(eq(session.id, hashToken(long.token)))).toHaveLength(0);
	});

	// ASVS V7.4.2: disabling a user ends their sessions; a disabled account cannot sign in (403 only with the right password).
	test('disabling ends every session of the user and refuses sign-in', async () => {
		const account = await verifyPasswordSignIn(db, { username: 'author', password: DEMO_PASSWORD, address: '10.4.0.1' });
		const s = await startSession(db, account, 'password', '10.4.0.1');
		const admin = await sessionUser(db, 'admin');
		await setAccountDisabled(db, admin, account.id, true, 'Left the company');
		expect('end' in (await validateSessionToken(db, s.token))).toBe(true);
		expect(await codeOf(verifyPasswordSignIn(db, { username: 'author', password: DEMO_PASSWORD, address: '10.4.0.1' }))).toBe('403 disabled');
		expect(await codeOf(verifyPasswordSignIn(db, { username: 'author', password: 'wrong-password-1', address: '10.4.0.1' }))).toBe('401 bad-credentials');
		await setAccountDisabled(db, admin, account.id, false, 'Rehired');
		expect(await codeOf(verifyPasswordSignIn(db, { username: 'author', password: DEMO_PASSWORD, address: '10.4.0.1' }))).toBe('ok');
	});

	test('the attempt log never holds a password', async () => {
		const rows = await db.execute(sql`select * from ${signInAttempt}`);
		const text = JSON.stringify(rows);
		expect(text).not.toContain(DEMO_PASSWORD);
		expect(text).not.toContain('wrong-password-1');
	});
});
