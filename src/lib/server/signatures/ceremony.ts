import { createHash, randomUUID } from 'node:crypto';
import { eq, sql } from 'drizzle-orm';
import type { AuthenticationResponseJSON } from '@simplewebauthn/server';
import type { Database } from '../db/client';
import { session as sessionTable, signature } from '../db/schema';
import { getConfig } from '../config';
import type { UnitOfWork } from '../work';
import { findAccountById, normaliseUsername } from '../auth/account';
import { AuthError, type AuthErrorCode } from '../auth/errors';
import { isLocked, recordFailure, recordRefusal, recordSuccess, type AttemptTarget, type RefusalOutcome } from '../auth/lockout';
import { verifyPassword } from '../auth/password';
import { verifyAssertion, type RelyingParty } from '../auth/passkey';
import type { SessionInfo, SessionUser } from '../auth/types';
import { canonicalJson } from '$lib/domain/canonical';
import { isGmpMeaning, type SignatureMeaning, type SignatureMethod } from '$lib/domain/signature';

/**
 * The signing ceremony (21 CFR 11.50, 11.70, 11.100, 11.200, 11.300). Two steps, so a wrong
 * password is recorded even though the caller's own unit of work never starts:
 *
 *   1. `verifySigner(db, …)` checks who signs and their credentials, outside any unit of work;
 *      failures and refusals are audited (and counted toward the lockout) in their own.
 *   2. `signRecord(uow, proof, …)` writes the signature row and its audit event in the caller's
 *      unit of work, together with the record it signs: both commit or neither does.
 */

export type SignatureCredentials =
	| { method: 'password'; username?: string; password: string }
	| { method: 'passkey'; response: AuthenticationResponseJSON };

export interface SignerRequest {
	signer: SessionUser;
	/** The browser session; API tokens have none and can never sign. */
	session: SessionInfo | null;
	meaning: SignatureMeaning;
	credentials: SignatureCredentials;
	/** Client address, for the attempt log. */
	address: string;
	/** Needed for passkeys: the relying party of this request (see auth/passkey relyingParty). */
	relyingParty?: RelyingParty;
}

const PROOF_TTL_MS = 5 * 60_000;
const issued = new WeakSet<object>();
const spent = new WeakSet<object>();

/** Evidence that one person just proved who they are for one meaning; single use, short-lived. */
export interface SignerProof {
	readonly signer: SessionUser;
	readonly sessionId: string;
	readonly meaning: SignatureMeaning;
	readonly method: SignatureMethod;
	readonly verifiedAt: number;
}

export class SignatureError extends AuthError {}

function refuse(code: AuthErrorCode, message: string): never {
	throw new SignatureError(code, message);
}

/**
 * Verifies the signer. Refuses (each refusal audited): no browser session (401), a service
 * account (403), an administrator giving a GMP meaning (403; design.md: admins sign no GMP
 * record, so account control and signing stay with different people, 11.200(a)(3)), a username
 * that is not the session's (403; 11.200(a)(2): only the owner can use a signature), a locked
 * account (423). The first signing of a continuous session needs username and password, later
 * ones the password or a passkey (11.200(a)(1)(i)). A wrong password counts toward the lockout.
 */
export async function verifySigner(db: Database, request: SignerRequest): Promise<SignerProof> {
	const { signer, session, credentials } = request;
	const target: AttemptTarget = { username: signer.username, account: { id: signer.id, name: signer.name }, address: request.address, kind: 'signing' };
	const refusal = async (code: AuthErrorCode, message: string, outcome: RefusalOutcome = 'refused'): Promise<never> => {
		await recordRefusal(db, target, outcome, message);
		refuse(code, message);
	};
	if (!session) return refusal('no-session', 'Signing needs a person signed in to a browser session.');
	if (signer.kind !== 'person') return refusal('service-account', 'Service accounts cannot sign.');
	if (isGmpMeaning(request.meaning) && signer.roles.includes('admin')) return refusal('admin-gmp', 'Administrators do not sign GMP records.');
	const account = await findAccountById(db, signer.id);
	if (!account || account.disabledAt) return refusal('disabled', 'This account is disabled.', 'disabled');
	if (await isLocked(db, target)) return refusal('locked', 'Signing is locked after repeated wrong passwords. Try later or ask an administrator.', 'locked');
	const first = session.firstSignedAt === null;
	if (credentials.method === 'password') {
		if (credentials.username !== undefined && credentials.username.trim() !== '' && normaliseUsername(credentials.username) !== signer.username) {
			return refusal('not-yourself', 'You can only sign as yourself: the username is not the one signed in.');
		}
		// Both are audited refusals too: a signing attempt short of a credential is attempted misuse
		// as much as a wrong one (11.300(d); finding 39). Neither counts toward the lockout.
		if (first && !credentials.username?.trim()) return refusal('username-required', 'The first signature of a session needs your username and password.');
		if (!credentials.password) return refusal('invalid-input', 'Enter your password.');
		const ok = account.passwordHash ? await verifyPassword(account.passwordHash, credentials.password) : false;
		if (!ok) {
			const { locked } = await recordFailure(db, target);
			refuse(locked ? 'locked' : 'bad-credentials', locked ? 'Too many wrong passwords: signing is locked for a while.' : 'The password is wrong. Nothing was signed.');
		}
	} else {
		if (first) refuse('passkey-not-allowed', 'The first signature of a session needs your username and password; a passkey works for later ones.');
		if (!request.relyingParty) throw new Error('verifySigner: a passkey signature needs the relying party.');
		try {
			await verifyAssertion(db, credentials.response, 'sign', { userId: signer.id, sessionId: session.id }, request.relyingParty);
		} catch (err) {
			if (err instanceof AuthError && err.code === 'not-yourself') return refusal('not-yourself', 'This passkey belongs to someone else.');
			if (err instanceof AuthError && err.code === 'passkey-invalid') await recordFailure(db, target);
			// A replayed or foreign challenge is attempted misuse (11.300(d)): audited, not counted.
			if (err instanceof AuthError && err.code === 'challenge') await recordRefusal(db, target, 'refused', err.message);
			throw err;
		}
	}
	await recordSuccess(db, target);
	const proof: SignerProof = Object.freeze({ signer, sessionId: session.id, meaning: request.meaning, method: credentials.method, verifiedAt: Date.now() });
	issued.add(proof);
	return proof;
}

/** What is signed: the record, its meaning, and the exact content whose hash binds them (11.70). */
export interface SignatureSubject {
	meaning: SignatureMeaning;
	entityType: string;
	entityId: string;
	batchId?: string | null;
	/** Any JSON value: hashed as RFC 8785 canonical JSON. Keep it the record's own content. */
	content: unknown;
}

export interface SignatureRecord {
	id: string;
	signerId: string;
	printedName: string;
	meaning: SignatureMeaning;
	at: string;
	timeZone: string;
	method: SignatureMethod;
	entityType: string;
	entityId: string;
	batchId: string | null;
	contentHash: string;
	auditSeq: number;
}

/** SHA-256 (hex) of the RFC 8785 canonical JSON of the content (11.70: the signature is bound to it). */
export function hashContent(content: unknown): string {
	return createHash('sha256').update(canonicalJson(content)).digest('hex');
}

/**
 * Writes the signature in the caller's unit of work (so it commits with the record it signs, or
 * not at all) and marks the session's first signing. The unit of work's actor must be the signer.
 * Signature rows are never updated or deleted (append-only triggers; 11.70).
 */
export async function signRecord(uow: UnitOfWork, proof: SignerProof, subject: SignatureSubject): Promise<SignatureRecord> {
	if (!issued.has(proof)) throw new Error('signRecord needs a proof from verifySigner.');
	if (spent.has(proof)) throw new Error('This signer proof was already used: every signature needs its own ceremony.');
	if (Date.now() - proof.verifiedAt > PROOF_TTL_MS) throw new SignatureError('invalid-input', 'The signing took too long. Sign again.');
	if (proof.meaning !== subject.meaning) throw new Error(`The proof was given for "${proof.meaning}", not "${subject.meaning}".`);
	if (uow.actor.id !== proof.signer.id) throw new Error('The unit of work must act as the signer.');
	spent.add(proof);
	const id = randomUUID();
	const contentHash = hashContent(subject.content);
	const timeZone = getConfig().RIMEBOOK_SITE_TIMEZONE;
	const printedName = proof.signer.name;
	const appended = await uow.audit({
		action: 'signature.sign',
		entityType: subject.entityType,
		entityId: subject.entityId,
		batchId: subject.batchId ?? null,
		after: { signatureId: id, signerId: proof.signer.id, printedName, meaning: subject.meaning, method: proof.method, timeZone, contentHash }
	});
	const record: SignatureRecord = {
		id,
		signerId: proof.signer.id,
		printedName,
		meaning: subject.meaning,
		// The ledger's server clock (UTC) is the signing time, so the event and the row agree.
		at: appended.at,
		timeZone,
		method: proof.method,
		entityType: subject.entityType,
		entityId: subject.entityId,
		batchId: subject.batchId ?? null,
		contentHash,
		auditSeq: appended.seq
	};
	await uow.tx.insert(signature).values(record);
	await uow.tx
		.update(sessionTable)
		.set({ firstSignedAt: sql`coalesce(${sessionTable.firstSignedAt}, now())` })
		.where(eq(sessionTable.id, proof.sessionId));
	return record;
}
