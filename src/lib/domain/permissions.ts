/**
 * The one permission table (permission → roles). Every load, form action and endpoint asks
 * through the guard in $lib/server/auth/guard. 21 CFR 11.10(d), (g); Annex 11, 12.1; ASVS V8.
 * Inspectors read and change nothing; admins manage and sign no GMP record (design.md, roles).
 */
export const roles = ['author', 'operator', 'supervisor', 'qa', 'inspector', 'admin'] as const;
export type Role = (typeof roles)[number];

const everyone = roles;

export const permissionTable = {
	'today.view': everyone,
	'profile.manage': everyone,
	'master.read': ['author', 'supervisor', 'qa', 'inspector'],
	'master.author': ['author'],
	'master.approve': ['qa'],
	// Send a version in review back to draft: QA, or its author withdrawing it (the service checks which).
	'master.return': ['author', 'qa'],
	'batch.read': ['operator', 'supervisor', 'qa', 'inspector'],
	'batch.issue': ['qa'],
	'batch.execute': ['operator', 'supervisor'],
	'batch.verify': ['supervisor'],
	'batch.release': ['qa'],
	'cycle.read': ['author', 'operator', 'supervisor', 'qa', 'inspector'],
	'cycle.upload': ['operator', 'supervisor'],
	'deviation.read': ['operator', 'supervisor', 'qa', 'inspector'],
	'deviation.raise': ['operator', 'supervisor', 'qa'],
	'deviation.approve': ['qa'],
	'review.perform': ['qa'],
	'audit.read': ['inspector', 'qa', 'admin'],
	'audit.export': ['inspector', 'qa', 'admin'],
	// Sign a ledger checkpoint now: a write, so not for inspectors, who change nothing.
	'audit.checkpoint': ['qa', 'admin'],
	'equipment.read': ['author', 'operator', 'supervisor', 'qa', 'inspector', 'admin'],
	'equipment.manage': ['admin'],
	'user.read': ['admin', 'inspector'],
	'user.manage': ['admin'],
	'settings.manage': ['admin']
} as const satisfies Record<string, readonly Role[]>;

export type Permission = keyof typeof permissionTable;
export const permissions = Object.keys(permissionTable) as Permission[];

export function isRole(value: unknown): value is Role {
	return typeof value === 'string' && (roles as readonly string[]).includes(value);
}

export function isPermission(value: unknown): value is Permission {
	return typeof value === 'string' && Object.hasOwn(permissionTable, value);
}

/** The roles that hold a permission. */
export function rolesWith(permission: Permission): readonly Role[] {
	return permissionTable[permission];
}

/** Whether any of the roles grants the permission. */
export function hasPermission(userRoles: readonly Role[], permission: Permission): boolean {
	const allowed: readonly Role[] = permissionTable[permission];
	return userRoles.some((r) => allowed.includes(r));
}

/** Every permission the roles grant, for page data (what the shell may show). */
export function permissionsOf(userRoles: readonly Role[]): Permission[] {
	return permissions.filter((p) => hasPermission(userRoles, p));
}
