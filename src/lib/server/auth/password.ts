import { hash, verify } from '@node-rs/argon2';
import { normalisePassword } from '$lib/domain/password-policy';

// OWASP Password Storage Cheat Sheet, argon2id: m = 19 MiB, t = 2, p = 1 (the minimum it lists).
const ARGON2ID = 2;
export const passwordHashOptions = { algorithm: ARGON2ID, memoryCost: 19_456, timeCost: 2, parallelism: 1 } as const;

/** NIST SP 800-63B-4 §3.1.1.2: normalise (NFKC) before hashing, so the same password always verifies. */
export function hashPassword(password: string): Promise<string> {
	return hash(normalisePassword(password), passwordHashOptions);
}

export async function verifyPassword(passwordHash: string, password: string): Promise<boolean> {
	try {
		return await verify(passwordHash, normalisePassword(password));
	} catch {
		return false;
	}
}

let dummy: Promise<string> | undefined;

/**
 * Verifies against a throw-away hash, so an unknown username costs the same time as a known one
 * (ASVS V6.3.8: no user enumeration through timing).
 */
export async function verifyNothing(password: string): Promise<false> {
	dummy ??= hash('rimebook-no-such-account', passwordHashOptions);
	await verifyPassword(await dummy, password);
	return false;
}
