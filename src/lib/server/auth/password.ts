import { hash, verify } from '@node-rs/argon2';

// OWASP Password Storage Cheat Sheet, argon2id: m = 19 MiB, t = 2, p = 1 (the minimum it lists).
const ARGON2ID = 2;
export const passwordHashOptions = { algorithm: ARGON2ID, memoryCost: 19_456, timeCost: 2, parallelism: 1 } as const;

export function hashPassword(password: string): Promise<string> {
	return hash(password, passwordHashOptions);
}

export async function verifyPassword(passwordHash: string, password: string): Promise<boolean> {
	try {
		return await verify(passwordHash, password);
	} catch {
		return false;
	}
}
