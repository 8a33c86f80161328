import { and, eq, ne, sql } from 'drizzle-orm';
import type { Database } from '../db/client';
import { session, user } from '../db/schema';
import { runUnitOfWork } from '../work';
import { actorOf } from '../auth/account';
import { checkNewPassword } from '../auth/blocklist';
import { AuthError } from '../auth/errors';
import { hashPassword } from '../auth/password';
import { reauthenticate } from '../auth/signin';
import type { SessionUser } from '../auth/types';

/**
 * A person changes their own password: the current one first (ASVS V6.3.9 re-authentication),
 * the new one against the rules (NIST SP 800-63B-4 §3.1.1.2), and every other session of theirs
 * ends (ASVS V7.4.3). The password itself is never audited, only that it changed.
 */
export async function changeOwnPassword(
	db: Database,
	u: SessionUser,
	currentSessionId: string | null,
	input: { current: string; next: string; address: string }
): Promise<void> {
	await reauthenticate(db, u, input.current, input.address);
	const problems = checkNewPassword(input.next, { username: u.username, name: u.name });
	if (problems.length) throw new AuthError('password-rules', 'The new password does not meet the rules.', { problems });
	if (input.next === input.current) throw new AuthError('password-rules', 'The new password must differ from the current one.', { problems: ['same'] });
	const passwordHash = await hashPassword(input.next);
	await runUnitOfWork(db, actorOf(u), async (uow) => {
		await uow.tx.update(user).set({ passwordHash, passwordChangedAt: sql`now()`, mustChangePassword: false }).where(eq(user.id, u.id));
		await uow.tx.delete(session).where(currentSessionId ? and(eq(session.userId, u.id), ne(session.id, currentSessionId)) : eq(session.userId, u.id));
		await uow.audit({ action: 'user.password-change', entityType: 'user', entityId: u.id, after: { mustChangePassword: false }, reason: 'Changed by its owner' });
	});
}
