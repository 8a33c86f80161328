import { createHash, randomBytes } from 'node:crypto';
import type { Cookies } from '@sveltejs/kit';
import { Lucia, TimeSpan } from 'lucia';
import { DrizzlePostgreSQLAdapter } from '@lucia-auth/adapter-drizzle';
import { eq } from 'drizzle-orm';
import type { Database, Executor } from '../db/client';
import { session as sessionTable, user as userTable, userRole } from '../db/schema';
import { getConfig } from '../config';
import { isRole, type Role } from '$lib/domain/permissions';
import type { SessionInfo, SessionUser } from './types';

/**
 * Browser sessions through Lucia 3 on the Drizzle adapter. The cookie carries a random 256-bit
 * token; the session id Lucia stores is SHA-256(token), so a copy of the database cannot be
 * replayed as a cookie (ASVS V7.2.4; style.md: "an opaque random token stored hashed").
 */
function createLucia(db: Database) {
	const config = getConfig();
	return new Lucia(new DrizzlePostgreSQLAdapter(db, sessionTable, userTable), {
		sessionExpiresIn: new TimeSpan(config.RIMEBOOK_SESSION_IDLE_MINUTES, 'm'),
		// A browser-session cookie: closing the browser ends it too. Attributes are set in setSessionCookie.
		sessionCookie: { expires: false },
		getSessionAttributes: (a) => ({ createdAt: a.createdAt, lastSeenAt: a.lastSeenAt, firstSignedAt: a.firstSignedAt, method: a.method }),
		getUserAttributes: (a) => ({
			username: a.username,
			name: a.name,
			kind: a.kind,
			disabledAt: a.disabledAt,
			mustChangePassword: a.mustChangePassword,
			passwordChangedAt: a.passwordChangedAt,
			locale: a.locale
		})
	});
}

type AppLucia = ReturnType<typeof createLucia>;

declare module 'lucia' {
	interface Register {
		Lucia: AppLucia;
		DatabaseSessionAttributes: {
			createdAt: Date;
			lastSeenAt: Date;
			firstSignedAt: Date | null;
			method: 'password' | 'passkey';
		};
		DatabaseUserAttributes: {
			username: string;
			name: string;
			kind: 'person' | 'service';
			disabledAt: Date | null;
			mustChangePassword: boolean;
			passwordChangedAt: Date | null;
			locale: string;
		};
	}
}

const instances = new WeakMap<Database, AppLucia>();

export function luciaFor(db: Database): AppLucia {
	let lucia = instances.get(db);
	if (!lucia) {
		lucia = createLucia(db);
		instances.set(db, lucia);
	}
	return lucia;
}

export function hashToken(token: string): string {
	return createHash('sha256').update(token).digest('hex');
}

export function generateToken(): string {
	return randomBytes(32).toString('base64url');
}

/** Why a presented cookie did not give a session: shown on the sign-in page. */
export type SessionEnd = 'idle' | 'absolute' | 'disabled' | 'invalid';

export interface ValidatedSession {
	user: SessionUser;
	session: SessionInfo;
}

/** A new session for a person who just proved who they are (ASVS V7.2.4: a new token at every sign-in). */
export async function createUserSession(db: Database, userId: string, method: 'password' | 'passkey'): Promise<{ token: string; session: SessionInfo }> {
	const token = generateToken();
	const now = new Date();
	const created = await luciaFor(db).createSession(userId, { createdAt: now, lastSeenAt: now, firstSignedAt: null, method }, { sessionId: hashToken(token) });
	return { token, session: toSessionInfo(created) };
}

/**
 * The session of a cookie token, or why there is none. Enforces the idle timeout
 * (RIMEBOOK_SESSION_IDLE_MINUTES) to the minute, the absolute limit
 * (RIMEBOOK_SESSION_ABSOLUTE_MINUTES: NIST SP 800-63B-4 §2.3.3, AAL3 15 min idle / 12 h) and
 * ends sessions of disabled users (ASVS V7.4.2).
 */
export async function validateSessionToken(db: Database, token: string, now = new Date()): Promise<ValidatedSession | { end: SessionEnd }> {
	const config = getConfig();
	const lucia = luciaFor(db);
	const id = hashToken(token);
	const { session, user } = await lucia.validateSession(id);
	if (!session) return { end: 'idle' };
	if (user.disabledAt) {
		await lucia.invalidateSession(id);
		return { end: 'disabled' };
	}
	const absoluteEnd = session.createdAt.getTime() + config.RIMEBOOK_SESSION_ABSOLUTE_MINUTES * 60_000;
	if (now.getTime() >= absoluteEnd) {
		await lucia.invalidateSession(id);
		return { end: 'absolute' };
	}
	const idleMs = config.RIMEBOOK_SESSION_IDLE_MINUTES * 60_000;
	// Lucia only extends after half the idle window; extend every minute so the idle limit is exact.
	let expiresAt = session.expiresAt;
	if (now.getTime() - session.lastSeenAt.getTime() >= 60_000 || session.fresh) {
		expiresAt = new Date(Math.min(now.getTime() + idleMs, absoluteEnd));
		await db.update(sessionTable).set({ lastSeenAt: now, expiresAt }).where(eq(sessionTable.id, id));
	}
	const roles = await rolesOf(db, user.id);
	const passwordExpired = isPasswordExpired(user.passwordChangedAt, now);
	return {
		user: {
			id: user.id,
			username: user.username,
			name: user.name,
			kind: user.kind,
			roles,
			mustChangePassword: user.mustChangePassword || passwordExpired,
			locale: user.locale
		},
		session: { ...toSessionInfo(session), expiresAt }
	};
}

/** RIMEBOOK_PASSWORD_EXPIRY_DAYS = 0 (the default) means never: NIST SP 800-63B-4 §3.1.1.2 forbids forced rotation. */
function isPasswordExpired(changedAt: Date | null, now: Date): boolean {
	const days = getConfig().RIMEBOOK_PASSWORD_EXPIRY_DAYS;
	return days > 0 && changedAt !== null && now.getTime() - changedAt.getTime() > days * 86_400_000;
}

export async function rolesOf(db: Executor, userId: string): Promise<Role[]> {
	const rows = await db.select({ role: userRole.role }).from(userRole).where(eq(userRole.userId, userId));
	return rows.map((r) => r.role).filter(isRole).sort();
}

export async function invalidateSession(db: Database, sessionId: string): Promise<void> {
	await luciaFor(db).invalidateSession(sessionId);
}

/** Ends every session of a user (disabling, password reset: ASVS V7.4.2, V7.4.3). */
export async function invalidateUserSessions(db: Executor, userId: string): Promise<void> {
	await db.delete(sessionTable).where(eq(sessionTable.userId, userId));
}

function toSessionInfo(s: { id: string; expiresAt: Date; createdAt: Date; firstSignedAt: Date | null; method: 'password' | 'passkey' }): SessionInfo {
	return { id: s.id, expiresAt: s.expiresAt, createdAt: s.createdAt, firstSignedAt: s.firstSignedAt, method: s.method };
}

/** Secure when the public origin is https (or, without ORIGIN, when this request came over https). */
export function isSecureContext(url: URL): boolean {
	const origin = getConfig().ORIGIN;
	return origin ? origin.startsWith('https:') : url.protocol === 'https:';
}

/** `__Host-` pins the cookie to this host and path / over https (RFC 6265bis §4.1.3.2; ASVS V3.3.1). */
export function sessionCookieName(secure: boolean): string {
	return secure ? '__Host-rimebook_session' : 'rimebook_session';
}

/** httpOnly, SameSite=Lax, Secure in production, no Expires: a browser-session cookie (ASVS V3.3). */
export function setSessionCookie(cookies: Cookies, url: URL, token: string): void {
	const secure = isSecureContext(url);
	cookies.set(sessionCookieName(secure), token, { path: '/', httpOnly: true, sameSite: 'lax', secure });
}

export function clearSessionCookie(cookies: Cookies, url: URL): void {
	const secure = isSecureContext(url);
	cookies.delete(sessionCookieName(secure), { path: '/', httpOnly: true, sameSite: 'lax', secure });
}

export function readSessionCookie(cookies: Cookies, url: URL): string | undefined {
	return cookies.get(sessionCookieName(isSecureContext(url)));
}
