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
	mustChangePassword: boolean;
	locale: string;
}

export interface SessionInfo {
	id: string;
	expiresAt: Date;
	/** 21 CFR 11.200(a)(1)(i): set after the first signing of this continuous session. */
	firstSignedAt: Date | null;
}
