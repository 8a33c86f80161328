import { createHmac, randomBytes } from 'node:crypto';
import { eq } from 'drizzle-orm';
import type { Executor } from '../db/client';
import { setting } from '../db/schema';

/**
 * Names typed at sign-in that belong to no account are not written to the append-only ledger as
 * typed (finding 48): people type passwords into the username field, and the ledger (and every
 * export handed to an inspector) keeps what it is given for good. The ledger gets a keyed hash
 * instead, HMAC-SHA-256 (RFC 2104) under a random per-site key, so repeated tries of one name are
 * still seen as one name, but the name cannot be recovered from the trail or an export, nor
 * guessed by hashing candidates without the key.
 *
 * The key lives in `setting` (made on first need; not part of the ledger or its exports).
 * Lockout by name is unchanged: the bookkeeping table sign_in_attempt keeps the typed name for
 * the lockout window's counting (see lockout.ts). Replacing the key only stops old and new
 * pseudonyms from matching; nothing else depends on it.
 */
export const PSEUDONYM_KEY_SETTING = 'auth.username-pseudonym-key';
const PREFIX = 'hmac-sha256:';

/** The pseudonym of a (lower-cased) name under a key: 128 bits of HMAC-SHA-256, hex. */
export function pseudonymOf(key: Buffer, username: string): string {
	return PREFIX + createHmac('sha256', key).update(username, 'utf8').digest('hex').slice(0, 32);
}

/** The site's pseudonym key, created on first use; concurrent first uses agree (on conflict do nothing). */
export async function loadPseudonymKey(db: Executor): Promise<Buffer> {
	await db
		.insert(setting)
		.values({ key: PSEUDONYM_KEY_SETTING, value: randomBytes(32).toString('hex') })
		.onConflictDoNothing({ target: setting.key });
	const [row] = await db.select({ value: setting.value }).from(setting).where(eq(setting.key, PSEUDONYM_KEY_SETTING));
	if (typeof row?.value !== 'string' || !/^[0-9a-f]{64}$/.test(row.value)) throw new Error(`The setting ${PSEUDONYM_KEY_SETTING} is not a 256-bit hex key.`);
	return Buffer.from(row.value, 'hex');
}

/**
 * What the ledger says about the name of an attempt: the name itself when it is an account's
 * (it is then no secret), otherwise its pseudonym; nothing when no name was typed.
 */
export async function auditedUsername(db: Executor, target: { username: string; account: unknown }): Promise<{ username: string } | { usernameKeyed: string } | Record<string, never>> {
	if (target.account) return { username: target.username };
	if (!target.username) return {};
	return { usernameKeyed: pseudonymOf(await loadPseudonymKey(db), target.username) };
}

