import { randomUUID } from 'node:crypto';
import { and, eq, inArray, sql } from 'drizzle-orm';
import type { Database } from '../db/client';
import { apiToken, user, userRole } from '../db/schema';
import { runUnitOfWork } from '../work';
import { actorOf, normaliseUsername } from '../auth/account';
import { AuthError } from '../auth/errors';
import { hashPassword } from '../auth/password';
import { invalidateUserSessions, rolesOf } from '../auth/session';
import type { SessionUser } from '../auth/types';
import type { Actor } from '../audit/ledger';
import { pgErrorCode } from '../db/client';
import type { Role } from '$lib/domain/permissions';
import { generateTemporaryPassword } from './temporary-password';

/**
 * User administration (21 CFR 11.100(a), 11.300(a), (b); Annex 11, 12.1–12.3). Every change is
 * one unit of work with its audit event naming who, what (before and after) and why. Accounts are
 * never deleted and a username is never reused, even after its account is disabled.
 */

export interface NewAccount {
	username: string;
	name: string;
	email: string | null;
	kind: 'person' | 'service';
	roles: Role[];
}

export const USERNAME_PATTERN = /^[a-z][a-z0-9._-]{1,39}$/;

/**
 * Creates an account, by an admin (or, for the very first admin, by the system through
 * `npm run user:create`); a person gets a one-time password to hand over (shown once, never stored in clear). */
export async function createAccount(db: Database, by: Actor, input: NewAccount, reason: string): Promise<{ id: string; temporaryPassword: string | null }> {
	const username = normaliseUsername(input.username);
	if (!USERNAME_PATTERN.test(username)) throw new AuthError('invalid-input', 'A username is 2–40 characters: lower-case letters, digits, dot, dash or underscore, starting with a letter.');
	const temporaryPassword = input.kind === 'person' ? generateTemporaryPassword({ username, name: input.name }) : null;
	const passwordHash = temporaryPassword ? await hashPassword(temporaryPassword) : null;
	const id = randomUUID();
	try {
		await runUnitOfWork(db, by, async (uow) => {
			await uow.tx.insert(user).values({
				id,
				username,
				name: input.name.trim(),
				email: input.email?.trim() || null,
				kind: input.kind,
				passwordHash,
				passwordChangedAt: passwordHash ? new Date() : null,
				// NIST SP 800-63B-4 §3.1.1.2 allows a forced change when the secret was set by someone else.
				mustChangePassword: input.kind === 'person'
			});
			if (input.roles.length) await uow.tx.insert(userRole).values(input.roles.map((role) => ({ userId: id, role })));
			await uow.audit({
				action: 'user.create',
				entityType: 'user',
				entityId: id,
				after: { username, name: input.name.trim(), email: input.email?.trim() || null, kind: input.kind, roles: [...input.roles].sort() },
				reason
			});
		});
	} catch (err) {
		// 23505 unique_violation: the username exists, possibly disabled; it is never reused (11.100(a)).
		if (pgErrorCode(err) === '23505') throw new AuthError('conflict', 'This username is taken (usernames are never reused, even for disabled accounts).');
		throw err;
	}
	return { id, temporaryPassword };
}

export interface AccountChanges {
	name: string;
	email: string | null;
	roles: Role[];
}

/** Printed name, e-mail and roles; each role grant and removal is in the audit event (Annex 11, 12.3). */
export async function updateAccount(db: Database, admin: SessionUser, id: string, changes: AccountChanges, reason: string): Promise<void> {
	await runUnitOfWork(db, actorOf(admin), async (uow) => {
		const [before] = await uow.tx.select({ name: user.name, email: user.email }).from(user).where(eq(user.id, id)).for('update');
		if (!before) throw new AuthError('not-found', 'No such account.');
		const beforeRoles = await rolesOf(uow.tx, id);
		const roles = [...new Set(changes.roles)].sort();
		if (id === admin.id && beforeRoles.includes('admin') && !roles.includes('admin')) {
			throw new AuthError('conflict', 'You cannot remove your own administrator role; ask another administrator.');
		}
		const after = { name: changes.name.trim(), email: changes.email?.trim() || null };
		await uow.tx.update(user).set(after).where(eq(user.id, id));
		const removed = beforeRoles.filter((r) => !roles.includes(r));
		const added = roles.filter((r) => !beforeRoles.includes(r));
		if (removed.length) await uow.tx.delete(userRole).where(and(eq(userRole.userId, id), inArray(userRole.role, removed)));
		if (added.length) await uow.tx.insert(userRole).values(added.map((role) => ({ userId: id, role })));
		await uow.audit({
			action: 'user.update',
			entityType: 'user',
			entityId: id,
			before: { ...before, roles: beforeRoles },
			after: { ...after, roles, rolesGranted: added, rolesRemoved: removed },
			reason
		});
	});
}

/** Disabling keeps the account and its history, ends its sessions and stops its API tokens (ASVS V7.4.2). */
export async function setAccountDisabled(db: Database, admin: SessionUser, id: string, disabled: boolean, reason: string): Promise<void> {
	if (id === admin.id && disabled) throw new AuthError('conflict', 'You cannot disable your own account.');
	await runUnitOfWork(db, actorOf(admin), async (uow) => {
		const [row] = await uow.tx.select({ disabledAt: user.disabledAt }).from(user).where(eq(user.id, id)).for('update');
		if (!row) throw new AuthError('not-found', 'No such account.');
		if ((row.disabledAt !== null) === disabled) throw new AuthError('conflict', disabled ? 'The account is already disabled.' : 'The account is already enabled.');
		await uow.tx.update(user).set({ disabledAt: disabled ? sql`now()` : null }).where(eq(user.id, id));
		if (disabled) {
			await invalidateUserSessions(uow.tx, id);
			await uow.tx.update(apiToken).set({ revokedAt: sql`now()` }).where(and(eq(apiToken.userId, id), sql`${apiToken.revokedAt} is null`));
		}
		await uow.audit({ action: disabled ? 'user.disable' : 'user.enable', entityType: 'user', entityId: id, before: { disabled: !disabled }, after: { disabled }, reason });
	});
}

/** Ends a lock early; earlier failures no longer count (21 CFR 11.300(d): the unlock is audited). */
export async function unlockAccount(db: Database, admin: SessionUser, id: string, reason: string): Promise<void> {
	await runUnitOfWork(db, actorOf(admin), async (uow) => {
		const [row] = await uow.tx.select({ lockedUntil: user.lockedUntil }).from(user).where(eq(user.id, id)).for('update');
		if (!row) throw new AuthError('not-found', 'No such account.');
		await uow.tx.update(user).set({ lockedUntil: null, lockoutClearedAt: sql`now()` }).where(eq(user.id, id));
		await uow.audit({ action: 'user.unlock', entityType: 'user', entityId: id, before: { lockedUntil: row.lockedUntil?.toISOString() ?? null }, after: { lockedUntil: null }, reason });
	});
}

/** A new one-time password; the person must change it at next sign-in, and their sessions end. */
export async function resetPassword(db: Database, admin: SessionUser, id: string, reason: string): Promise<{ temporaryPassword: string }> {
	const [target] = await db.select({ username: user.username, name: user.name, kind: user.kind }).from(user).where(eq(user.id, id));
	if (!target) throw new AuthError('not-found', 'No such account.');
	if (target.kind !== 'person') throw new AuthError('conflict', 'Service accounts have no password; give them an API token.');
	const temporaryPassword = generateTemporaryPassword(target);
	const passwordHash = await hashPassword(temporaryPassword);
	await runUnitOfWork(db, actorOf(admin), async (uow) => {
		await uow.tx.update(user).set({ passwordHash, passwordChangedAt: sql`now()`, mustChangePassword: true }).where(eq(user.id, id));
		await invalidateUserSessions(uow.tx, id);
		await uow.audit({ action: 'user.password-reset', entityType: 'user', entityId: id, after: { mustChangePassword: true }, reason });
	});
	return { temporaryPassword };
}
