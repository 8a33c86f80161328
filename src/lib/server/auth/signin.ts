import type { AuthenticationResponseJSON } from '@simplewebauthn/server';
import type { Database } from '../db/client';
import { runUnitOfWork } from '../work';
import { findAccountById, findAccountByUsername, normaliseUsername, type AccountRecord } from './account';
import { verifyAssertion, type RelyingParty } from './passkey';
import { AuthError } from './errors';
import { isAddressLimited, isLocked, recordFailure, recordRefusal, recordSuccess, type AttemptTarget } from './lockout';
import { verifyNothing, verifyPassword } from './password';
import { createUserSession, invalidateSession } from './session';
import type { SessionInfo, SessionUser } from './types';

export interface SignInRequest {
	username: string;
	password: string;
	address: string;
}

/**
 * Checks a username and password (21 CFR 11.300(a), (d); ASVS V6.3). Every refusal throws
 * AuthError with one plain code: `bad-credentials` for an unknown name and a wrong password alike,
 * `locked` (423), `rate-limited` (429), and `disabled` (403) only to someone who knew the password.
 * Each failure is recorded and audited before the error is thrown.
 */
export async function verifyPasswordSignIn(db: Database, request: SignInRequest): Promise<AccountRecord> {
	const username = normaliseUsername(request.username);
	const account = username ? await findAccountByUsername(db, username) : null;
	const target: AttemptTarget = { username, account: account && { id: account.id, name: account.name }, address: request.address, kind: 'password' };
	if (await isAddressLimited(db, request.address)) {
		await recordRefusal(db, target, 'rate-limited');
		throw new AuthError('rate-limited');
	}
	if (await isLocked(db, target)) {
		await recordRefusal(db, target, 'locked');
		throw new AuthError('locked');
	}
	// Service accounts have no password: they authenticate with API tokens only.
	const ok = account?.passwordHash ? await verifyPassword(account.passwordHash, request.password) : await verifyNothing(request.password);
	if (!ok || !account) {
		const { locked } = await recordFailure(db, target);
		throw new AuthError(locked ? 'locked' : 'bad-credentials');
	}
	if (account.disabledAt) {
		await recordRefusal(db, target, 'disabled');
		throw new AuthError('disabled');
	}
	await recordSuccess(db, target);
	return account;
}

/**
 * Opens a new session for a verified account and audits the sign-in (Annex 11, 12.4: who
 * entered the system, and when). Any session the browser already had is ended by the caller.
 */
export async function startSession(db: Database, account: Pick<AccountRecord, 'id' | 'name' | 'username'>, method: 'password' | 'passkey', address: string): Promise<{ token: string; session: SessionInfo }> {
	const created = await createUserSession(db, account.id, method);
	await runUnitOfWork(db, { id: account.id, name: account.name }, (uow) =>
		uow.audit({ action: 'auth.sign-in', entityType: 'user', entityId: account.id, after: { username: account.username, method, address } })
	);
	return created;
}

/** Sign-out: the session row goes, and the event is audited (ASVS V7.4.1). */
export async function endSession(db: Database, who: { id: string; name: string }, sessionId: string): Promise<void> {
	await invalidateSession(db, sessionId);
	await runUnitOfWork(db, who, (uow) => uow.audit({ action: 'auth.sign-out', entityType: 'user', entityId: who.id }));
}

/**
 * Signs in with a passkey (discoverable credential, user verification required). The challenge
 * was bound to a pre-sign-in nonce cookie; locks and disabling apply as for passwords.
 */
export async function verifyPasskeySignIn(
	db: Database,
	request: { response: AuthenticationResponseJSON; nonceHash: string; address: string },
	rp: RelyingParty
): Promise<AccountRecord> {
	if (await isAddressLimited(db, request.address)) {
		await recordRefusal(db, { username: '', account: null, address: request.address, kind: 'passkey' }, 'rate-limited');
		throw new AuthError('rate-limited');
	}
	let owner: { userId: string };
	try {
		owner = await verifyAssertion(db, request.response, 'sign-in', { sessionId: request.nonceHash }, rp);
	} catch (err) {
		const anonymous: AttemptTarget = { username: '', account: null, address: request.address, kind: 'passkey' };
		if (err instanceof AuthError && err.code === 'passkey-invalid') await recordFailure(db, anonymous);
		if (err instanceof AuthError && err.code === 'challenge') await recordRefusal(db, anonymous, 'refused', err.message);
		throw err;
	}
	const account = await findAccountById(db, owner.userId);
	if (!account) throw new AuthError('passkey-invalid');
	const target: AttemptTarget = { username: account.username, account: { id: account.id, name: account.name }, address: request.address, kind: 'passkey' };
	if (await isLocked(db, target)) {
		await recordRefusal(db, target, 'locked');
		throw new AuthError('locked');
	}
	if (account.disabledAt || account.kind !== 'person') {
		await recordRefusal(db, target, 'disabled');
		throw new AuthError('disabled');
	}
	await recordSuccess(db, target);
	return account;
}

/**
 * Re-authentication before changing credentials (ASVS V6.3.9 / V7.5.1): the current password,
 * with failures counted toward the lockout like any other.
 */
export async function reauthenticate(db: Database, u: SessionUser, password: string, address: string): Promise<void> {
	const account = await findAccountById(db, u.id);
	const target: AttemptTarget = { username: u.username, account: { id: u.id, name: u.name }, address, kind: 'password' };
	if (await isLocked(db, target)) {
		await recordRefusal(db, target, 'locked');
		throw new AuthError('locked');
	}
	const ok = account?.passwordHash ? await verifyPassword(account.passwordHash, password) : await verifyNothing(password);
	if (!ok) {
		const { locked } = await recordFailure(db, target);
		throw new AuthError(locked ? 'locked' : 'bad-credentials');
	}
	await recordSuccess(db, target);
}
