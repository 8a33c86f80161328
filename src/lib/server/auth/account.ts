import { eq } from 'drizzle-orm';
import type { Executor } from '../db/client';
import { user } from '../db/schema';
import type { Actor } from '../audit/ledger';
import type { SessionUser } from './types';

/** The account row fields sign-in and signing need; never sent to a page. */
export interface AccountRecord {
	id: string;
	username: string;
	name: string;
	kind: 'person' | 'service';
	passwordHash: string | null;
	disabledAt: Date | null;
	mustChangePassword: boolean;
}

/** Usernames are compared lower-cased and trimmed, NFKC-normalised (ASVS V6.3: one identity per name). */
export function normaliseUsername(username: string): string {
	return username.normalize('NFKC').trim().toLowerCase();
}

export async function findAccountByUsername(db: Executor, username: string): Promise<AccountRecord | null> {
	const [row] = await db
		.select({
			id: user.id,
			username: user.username,
			name: user.name,
			kind: user.kind,
			passwordHash: user.passwordHash,
			disabledAt: user.disabledAt,
			mustChangePassword: user.mustChangePassword
		})
		.from(user)
		.where(eq(user.username, normaliseUsername(username)));
	return row ?? null;
}

export async function findAccountById(db: Executor, id: string): Promise<AccountRecord | null> {
	const [row] = await db
		.select({
			id: user.id,
			username: user.username,
			name: user.name,
			kind: user.kind,
			passwordHash: user.passwordHash,
			disabledAt: user.disabledAt,
			mustChangePassword: user.mustChangePassword
		})
		.from(user)
		.where(eq(user.id, id));
	return row ?? null;
}

/** The audit actor of a signed-in user: id and printed name (21 CFR 11.10(e): who). */
export function actorOf(u: Pick<SessionUser, 'id' | 'name'>): Actor {
	return { id: u.id, name: u.name };
}
