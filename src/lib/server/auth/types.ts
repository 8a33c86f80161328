import type { Permission, Role } from '$lib/domain/permissions';

/** What every request knows of its user: never a hash or a token (style.md, page data). */
export interface SessionUser {
	id: string;
	username: string;
	name: string;
	kind: 'person' | 'service';
	roles: Role[];
	/** For API tokens: the permissions the token was granted (a subset of the roles'). */
	tokenPermissions?: Permission[];
	/** First sign-in after an admin created or reset the account, or the site's expiry passed. */
	mustChangePassword: boolean;
	locale: string;
}

export interface SessionInfo {
	/** SHA-256 of the cookie token: the cookie value itself is never stored (ASVS V7.2.4). */
	id: string;
	expiresAt: Date;
	createdAt: Date;
	method: 'password' | 'passkey';
	/** 21 CFR 11.200(a)(1)(i): set after the first signing of this continuous session. */
	firstSignedAt: Date | null;
}
