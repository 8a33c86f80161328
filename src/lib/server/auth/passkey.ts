import { randomUUID } from 'node:crypto';
import { and, eq, isNull, sql } from 'drizzle-orm';
import {
	generateAuthenticationOptions,
	generateRegistrationOptions,
	verifyAuthenticationResponse,
	verifyRegistrationResponse,
	type AuthenticationResponseJSON,
	type PublicKeyCredentialCreationOptionsJSON,
	type PublicKeyCredentialRequestOptionsJSON,
	type RegistrationResponseJSON
} from '@simplewebauthn/server';
import { decodeClientDataJSON, isoBase64URL } from '@simplewebauthn/server/helpers';
import type { Database, Executor } from '../db/client';
import { passkey, webauthnChallenge } from '../db/schema';
import { getConfig } from '../config';
import { runUnitOfWork } from '../work';
import { AuthError } from './errors';
import type { SessionUser } from './types';

/**
 * Passkeys (W3C Web Authentication Level 3 through @simplewebauthn/server) with user
 * verification required: an assertion without the UV flag is refused (W3C WebAuthn §7.2 step
 * 17; ASVS V6.5). Challenges are single use, expire in 5 minutes, and are bound to their purpose
 * and to the session (or pre-sign-in nonce) they were issued to, so a replayed or foreign
 * challenge fails.
 */
export type ChallengePurpose = 'register' | 'sign-in' | 'sign';
const CHALLENGE_TTL_MINUTES = 5;
const TIMEOUT_MS = 120_000;

export interface RelyingParty {
	id: string;
	name: string;
	origin: string;
}

/** rpID is ORIGIN's hostname (or the request's when ORIGIN is unset), the origin its scheme + host. */
export function relyingParty(url: URL): RelyingParty {
	const origin = new URL(getConfig().ORIGIN ?? url.origin);
	return { id: origin.hostname, name: getConfig().RIMEBOOK_SITE_NAME, origin: origin.origin };
}

async function storeChallenge(db: Executor, challenge: string, purpose: ChallengePurpose, binding: { userId?: string | null; sessionId: string }) {
	// Expired challenges are swept as new ones are made.
	await db.delete(webauthnChallenge).where(sql`${webauthnChallenge.expiresAt} < now()`);
	await db.insert(webauthnChallenge).values({
		challenge,
		purpose,
		userId: binding.userId ?? null,
		sessionId: binding.sessionId,
		expiresAt: sql`now() + make_interval(mins => ${CHALLENGE_TTL_MINUTES})` as unknown as Date
	});
}

/**
 * Takes the challenge out of the store (single use: deleted whether or not it matches) and checks
 * it was issued for this purpose, to this session, and has not expired.
 */
async function consumeChallenge(db: Executor, clientDataJSON: string, purpose: ChallengePurpose, binding: { userId?: string | null; sessionId: string }): Promise<string> {
	let challenge: string;
	try {
		challenge = decodeClientDataJSON(clientDataJSON).challenge;
	} catch {
		throw new AuthError('challenge', 'The passkey response cannot be read.');
	}
	const [row] = await db
		.delete(webauthnChallenge)
		.where(eq(webauthnChallenge.challenge, challenge))
		.returning({ purpose: webauthnChallenge.purpose, userId: webauthnChallenge.userId, sessionId: webauthnChallenge.sessionId, live: sql<boolean>`${webauthnChallenge.expiresAt} > now()` });
	if (!row) throw new AuthError('challenge', 'This passkey challenge is unknown or was already used.');
	const foreign = row.purpose !== purpose || row.sessionId !== binding.sessionId || (binding.userId !== undefined && row.userId !== binding.userId);
	if (foreign) throw new AuthError('challenge', 'This passkey challenge was issued for something else.');
	if (!row.live) throw new AuthError('challenge', 'This passkey challenge has expired. Try again.');
	return challenge;
}

function userHandle(userId: string): Uint8Array<ArrayBuffer> {
	return new Uint8Array(new TextEncoder().encode(userId));
}

export async function beginRegistration(db: Database, u: SessionUser, sessionId: string, rp: RelyingParty): Promise<PublicKeyCredentialCreationOptionsJSON> {
	const existing = await activePasskeys(db, u.id);
	const options = await generateRegistrationOptions({
		rpName: rp.name,
		rpID: rp.id,
		userName: u.username,
		userDisplayName: u.name,
		userID: userHandle(u.id),
		attestationType: 'none',
		timeout: TIMEOUT_MS,
		excludeCredentials: existing.map((p) => ({ id: p.id, transports: p.transports })),
		// A discoverable credential lets the person sign in without typing a username.
		authenticatorSelection: { residentKey: 'required', userVerification: 'required' }
	});
	await storeChallenge(db, options.challenge, 'register', { userId: u.id, sessionId });
	return options;
}

/** Verifies a new passkey and stores it with its audit event (Annex 11, 12.3: grants of credentials are logged). */
export async function finishRegistration(db: Database, u: SessionUser, sessionId: string, response: RegistrationResponseJSON, label: string, rp: RelyingParty): Promise<{ id: string }> {
	const challenge = await consumeChallenge(db, response.response.clientDataJSON, 'register', { userId: u.id, sessionId });
	let verification;
	try {
		verification = await verifyRegistrationResponse({ response, expectedChallenge: challenge, expectedOrigin: rp.origin, expectedRPID: rp.id, requireUserVerification: true });
	} catch (err) {
		throw new AuthError('passkey-invalid', err instanceof Error ? err.message : 'The passkey could not be verified.');
	}
	if (!verification.verified || !verification.registrationInfo.userVerified) throw new AuthError('passkey-invalid', 'The authenticator did not verify you (PIN or biometric).');
	const { credential, credentialBackedUp } = verification.registrationInfo;
	return runUnitOfWork(db, { id: u.id, name: u.name }, async (uow) => {
		await uow.tx.insert(passkey).values({
			id: credential.id,
			userId: u.id,
			publicKey: isoBase64URL.fromBuffer(credential.publicKey),
			counter: credential.counter,
			transports: credential.transports ?? [],
			label,
			backedUp: credentialBackedUp
		});
		await uow.audit({ action: 'passkey.register', entityType: 'passkey', entityId: credential.id, after: { userId: u.id, label, backedUp: credentialBackedUp }, reason: 'Passkey registered after re-authentication' });
		return { id: credential.id };
	});
}

/** Options for an assertion: for sign-in any discoverable passkey of this site; for signing, the signer's own. */
export async function beginAssertion(db: Database, purpose: 'sign-in' | 'sign', binding: { userId?: string; sessionId: string }, rp: RelyingParty): Promise<PublicKeyCredentialRequestOptionsJSON> {
	const allow = binding.userId ? (await activePasskeys(db, binding.userId)).map((p) => ({ id: p.id, transports: p.transports })) : undefined;
	if (allow && allow.length === 0) throw new AuthError('passkey-not-allowed', 'You have no passkey yet. Register one in your profile.');
	const options = await generateAuthenticationOptions({ rpID: rp.id, userVerification: 'required', timeout: TIMEOUT_MS, allowCredentials: allow });
	await storeChallenge(db, options.challenge, purpose, { userId: binding.userId ?? null, sessionId: binding.sessionId });
	return options;
}

/**
 * Verifies an assertion against its stored challenge and the credential's public key; bumps the
 * signature counter (W3C WebAuthn §6.1.1: a counter that goes backwards signals a cloned
 * authenticator). Returns the credential's owner.
 */
export async function verifyAssertion(
	db: Database,
	response: AuthenticationResponseJSON,
	purpose: 'sign-in' | 'sign',
	binding: { userId?: string; sessionId: string },
	rp: RelyingParty
): Promise<{ userId: string; passkeyId: string }> {
	const challenge = await consumeChallenge(db, response.response.clientDataJSON, purpose, binding);
	const [stored] = await db.select().from(passkey).where(and(eq(passkey.id, response.id), isNull(passkey.removedAt)));
	if (!stored) throw new AuthError('passkey-invalid', 'This passkey is not registered here.');
	if (binding.userId && stored.userId !== binding.userId) throw new AuthError('not-yourself', 'This passkey belongs to someone else.');
	let verification;
	try {
		verification = await verifyAuthenticationResponse({
			response,
			expectedChallenge: challenge,
			expectedOrigin: rp.origin,
			expectedRPID: rp.id,
			credential: { id: stored.id, publicKey: isoBase64URL.toBuffer(stored.publicKey), counter: stored.counter, transports: stored.transports as string[] },
			requireUserVerification: true
		});
	} catch (err) {
		throw new AuthError('passkey-invalid', err instanceof Error ? err.message : 'The passkey could not be verified.');
	}
	if (!verification.verified || !verification.authenticationInfo.userVerified) throw new AuthError('passkey-invalid', 'The authenticator did not verify you (PIN or biometric).');
	await db.update(passkey).set({ counter: verification.authenticationInfo.newCounter, lastUsedAt: sql`now()` }).where(eq(passkey.id, stored.id));
	return { userId: stored.userId, passkeyId: stored.id };
}

export interface PasskeySummary {
	id: string;
	label: string;
	transports: string[];
	backedUp: boolean;
	createdAt: Date;
	lastUsedAt: Date | null;
}

export async function activePasskeys(db: Executor, userId: string): Promise<PasskeySummary[]> {
	const rows = await db
		.select({ id: passkey.id, label: passkey.label, transports: passkey.transports, backedUp: passkey.backedUp, createdAt: passkey.createdAt, lastUsedAt: passkey.lastUsedAt })
		.from(passkey)
		.where(and(eq(passkey.userId, userId), isNull(passkey.removedAt)))
		.orderBy(passkey.createdAt);
	return rows.map((r) => ({ ...r, transports: Array.isArray(r.transports) ? (r.transports as string[]) : [] }));
}

/** Removes (never deletes) a passkey, audited with the reason. */
export async function removePasskey(db: Database, u: SessionUser, passkeyId: string): Promise<void> {
	await runUnitOfWork(db, { id: u.id, name: u.name }, async (uow) => {
		const removed = await uow.tx
			.update(passkey)
			.set({ removedAt: sql`now()` })
			.where(and(eq(passkey.id, passkeyId), eq(passkey.userId, u.id), isNull(passkey.removedAt)))
			.returning({ id: passkey.id, label: passkey.label });
		if (removed.length === 0) throw new AuthError('not-found', 'That passkey is not yours or was already removed.');
		await uow.audit({ action: 'passkey.remove', entityType: 'passkey', entityId: passkeyId, before: { label: removed[0].label }, reason: 'Removed by its owner after re-authentication' });
	});
}
