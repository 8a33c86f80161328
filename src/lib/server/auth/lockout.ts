import { randomUUID } from 'node:crypto';
import { and, count, eq, gt, isNotNull, sql } from 'drizzle-orm';
import type { Database, Executor } from '../db/client';
import { signInAttempt, user } from '../db/schema';
import { getConfig } from '../config';
import { runUnitOfWork } from '../work';
import { rowsOf, systemActor } from '../audit/ledger';
import { AuthError } from './errors';
import { auditedUsername } from './pseudonym';
import { notifyAccountLocked } from '../mail/notices';

/**
 * Attempted misuse (21 CFR 11.300(d); NIST SP 800-63B-4 §3.2.2 rate limiting; ASVS V6.3.1):
 * RIMEBOOK_LOCKOUT_ATTEMPTS failures of one name within RIMEBOOK_LOCKOUT_WINDOW_MINUTES lock it
 * for RIMEBOOK_LOCKOUT_MINUTES. Names that belong to nobody lock the same way, so neither the
 * answer nor its timing tells whether a username exists (ASVS V6.3.8).
 */
export interface LockoutPolicy {
	attempts: number;
	windowMinutes: number;
	lockMinutes: number;
	/** Failures from one client address within the window before it gets 429 (NIST §3.2.2). */
	addressFailures: number;
	/** Anonymous passkey challenges one address may ask for within the window (finding 28). */
	addressChallenges: number;
}

export function lockoutPolicy(): LockoutPolicy {
	const c = getConfig();
	// Common practice: an address may fail more often than a name (a shared shop-floor tablet, a
	// proxy), but not without limit; 4 × the per-name limit.
	// Common practice too: a passkey sign-in may be started and cancelled a few times per attempt,
	// so an address may ask for 4 × its failure allowance of challenges per window.
	const addressFailures = c.RIMEBOOK_LOCKOUT_ATTEMPTS * 4;
	return { attempts: c.RIMEBOOK_LOCKOUT_ATTEMPTS, windowMinutes: c.RIMEBOOK_LOCKOUT_WINDOW_MINUTES, lockMinutes: c.RIMEBOOK_LOCKOUT_MINUTES, addressFailures, addressChallenges: addressFailures * 4 };
}

export type AttemptKind = 'password' | 'passkey' | 'signing';

export interface AttemptTarget {
	/**
	 * The name as typed, lower-cased. Kept as typed only in sign_in_attempt (bookkeeping that
	 * counts failures per name for the lockout); the ledger gets it only when it is an account's,
	 * else a keyed pseudonym (pseudonym.ts; finding 48).
	 */
	username: string;
	/** The account it names, when there is one. */
	account: { id: string; name: string } | null;
	address: string;
	kind: AttemptKind;
}

const minutesAgo = (n: number) => sql`now() - make_interval(mins => ${n})`;

/** Whether this name is locked now; an admin's unlock ends it at once. */
export async function isLocked(db: Executor, target: Pick<AttemptTarget, 'username' | 'account'>): Promise<boolean> {
	if (target.account) {
		const [row] = await db
			.select({ id: user.id })
			.from(user)
			.where(and(eq(user.id, target.account.id), isNotNull(user.lockedUntil), gt(user.lockedUntil, sql`now()`)));
		return row !== undefined;
	}
	const [row] = await db
		.select({ id: signInAttempt.id })
		.from(signInAttempt)
		.where(and(eq(signInAttempt.username, target.username), isNotNull(signInAttempt.locksUntil), gt(signInAttempt.locksUntil, sql`now()`)))
		.limit(1);
	return row !== undefined;
}

/** Whether this client address has failed too often lately (NIST SP 800-63B-4 §3.2.2). */
export async function isAddressLimited(db: Executor, address: string, policy = lockoutPolicy()): Promise<boolean> {
	const [row] = await db
		.select({ n: count() })
		.from(signInAttempt)
		.where(and(eq(signInAttempt.address, address), eq(signInAttempt.outcome, 'failed'), gt(signInAttempt.at, minutesAgo(policy.windowMinutes))));
	return row.n >= policy.addressFailures;
}

/**
 * Admits one anonymous request for a passkey sign-in challenge from this address, or refuses it
 * (finding 28; NIST SP 800-63B-4 §3.2.2). Each request is logged as a `challenge` attempt, so an
 * address over its allowance, or over its failure limit, gets 429 before a challenge row is made.
 * The refusal is audited like any rate-limited sign-in: once per address and window.
 */
export async function admitChallengeRequest(db: Database, address: string, policy = lockoutPolicy()): Promise<void> {
	const target: AttemptTarget = { username: '', account: null, address, kind: 'passkey' };
	const [row] = await db
		.select({ n: count() })
		.from(signInAttempt)
		.where(and(eq(signInAttempt.address, address), eq(signInAttempt.outcome, 'challenge'), gt(signInAttempt.at, minutesAgo(policy.windowMinutes))));
	if (row.n >= policy.addressChallenges || (await isAddressLimited(db, address, policy))) {
		await recordRefusal(db, target, 'rate-limited', undefined, policy);
		throw new AuthError('rate-limited');
	}
	// Bookkeeping, not a GMP record (like recordSuccess): no audit event for an ordinary request.
	await db.insert(signInAttempt).values({ id: randomUUID(), username: '', address, succeeded: false, kind: 'passkey', outcome: 'challenge' });
}

/**
 * Records a failed attempt and its audit event; locks the name when this failure reaches the
 * limit, auditing the lock too. Returns whether the name is now locked.
 */
export async function recordFailure(db: Database, target: AttemptTarget, policy = lockoutPolicy()): Promise<{ locked: boolean }> {
	return runUnitOfWork(db, systemActor, async (uow) => {
		// The audit append takes the ledger's advisory lock first, so concurrent failures of one
		// name are counted one after another.
		const name = await auditedUsername(uow.tx, target);
		await uow.audit({
			action: target.kind === 'signing' ? 'signature.credentials-failed' : 'auth.sign-in-failed',
			entityType: 'user',
			entityId: target.account?.id ?? null,
			after: { ...name, address: target.address, method: target.kind === 'passkey' ? 'passkey' : 'password', knownAccount: target.account !== null },
			reason: target.kind === 'signing' ? 'Wrong password while signing' : 'Wrong username or password'
		});
		const id = randomUUID();
		await uow.tx.insert(signInAttempt).values({ id, username: target.username, address: target.address, succeeded: false, kind: target.kind, outcome: 'failed' });
		const failures = await countRecentFailures(uow.tx, target.username, policy);
		if (failures < policy.attempts) return { locked: false };
		const until = sql`now() + make_interval(mins => ${policy.lockMinutes})`;
		if (target.account) {
			await uow.tx.update(user).set({ lockedUntil: until }).where(eq(user.id, target.account.id));
		} else {
			await uow.tx.update(signInAttempt).set({ locksUntil: until }).where(eq(signInAttempt.id, id));
		}
		await uow.audit({
			action: 'user.lock',
			entityType: 'user',
			entityId: target.account?.id ?? null,
			after: { ...name, address: target.address, failures, lockMinutes: policy.lockMinutes },
			reason: `${failures} failed attempts within ${policy.windowMinutes} minutes`
		});
		// 11.300(d): attempts at unauthorized use are reported to the system security unit (admins); only for real accounts (a typed unknown name may be a password).
		if (target.account) await notifyAccountLocked(uow, { userId: target.account.id, username: target.username, failures, lockMinutes: policy.lockMinutes });
		return { locked: true };
	});
}

/** Failures of a name in the window, after its last success and its last unlock. */
async function countRecentFailures(db: Executor, username: string, policy: LockoutPolicy): Promise<number> {
	const result = await db.execute<{ n: number }>(sql`
		select count(*)::int as n from ${signInAttempt} a
		where a.username = ${username} and a.outcome = 'failed'
		  and a.at > ${minutesAgo(policy.windowMinutes)}
		  and a.at > coalesce((select max(s.at) from ${signInAttempt} s where s.username = ${username} and s.succeeded), '-infinity')
		  and a.at > coalesce((select u.lockout_cleared_at from ${user} u where u.username = ${username}), '-infinity')`);
	return rowsOf<{ n: number }>(result)[0].n;
}

/**
 * Records and audits an attempt refused before any password was checked: while locked, for a
 * disabled account, or for an address over its limit. Rate-limited refusals are audited once per
 * address and window, so a flood cannot flood the ledger.
 */
export type RefusalOutcome = 'locked' | 'disabled' | 'rate-limited' | 'refused';

export async function recordRefusal(db: Database, target: AttemptTarget, outcome: RefusalOutcome, reason?: string, policy = lockoutPolicy()): Promise<void> {
	if (outcome === 'rate-limited') {
		const [seen] = await db
			.select({ n: count() })
			.from(signInAttempt)
			.where(and(eq(signInAttempt.address, target.address), eq(signInAttempt.outcome, 'rate-limited'), gt(signInAttempt.at, minutesAgo(policy.windowMinutes))));
		if (seen.n > 0) {
			await db.insert(signInAttempt).values({ id: randomUUID(), username: target.username, address: target.address, succeeded: false, kind: target.kind, outcome });
			return;
		}
	}
	await runUnitOfWork(db, systemActor, async (uow) => {
		await uow.tx.insert(signInAttempt).values({ id: randomUUID(), username: target.username, address: target.address, succeeded: false, kind: target.kind, outcome });
		await uow.audit({
			action: target.kind === 'signing' ? 'signature.refused' : 'auth.sign-in-refused',
			entityType: 'user',
			entityId: target.account?.id ?? null,
			after: { ...(await auditedUsername(uow.tx, target)), address: target.address, outcome },
			reason: reason ?? refusalReasons[outcome]
		});
	});
}

const refusalReasons: Record<RefusalOutcome, string> = {
	locked: 'Account locked after repeated failures',
	disabled: 'Account disabled',
	'rate-limited': 'Too many failed attempts from this address',
	refused: 'Refused'
};

/** A success ends the run of failures for that name (bookkeeping, not a GMP record). */
export async function recordSuccess(db: Executor, target: Omit<AttemptTarget, 'account'>): Promise<void> {
	await db.insert(signInAttempt).values({ id: randomUUID(), username: target.username, address: target.address, succeeded: true, kind: target.kind, outcome: 'succeeded' });
}
