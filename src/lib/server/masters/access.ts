import { hasPermission, type Permission } from '$lib/domain/permissions';
import type { SessionUser } from '../auth/types';
import { MasterError } from './errors';

/** The permissions a user holds here: the roles', narrowed to a token's grant (guard.ts does the same). */
export function permissionsOfUser(user: SessionUser, wanted: readonly Permission[]): Permission[] {
	return wanted.filter((p) => hasPermission(user.roles, p) && (!user.tokenPermissions || user.tokenPermissions.includes(p)));
}

/**
 * Services check authority themselves too, not only the routes (21 CFR 11.10(g): authority is
 * checked before a record is altered or signed; the seed and other callers go through here).
 */
export function assertPermission(user: SessionUser, permission: Permission): void {
	if (permissionsOfUser(user, [permission]).length === 0) throw new MasterError('forbidden', 'Your roles do not allow this.');
}
