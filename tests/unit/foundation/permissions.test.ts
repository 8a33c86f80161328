import { describe, expect, it } from 'vitest';
import { hasPermission, permissionTable, permissionsOf, roles } from '$lib/domain/permissions';

describe('permission table', () => {
	it('lets inspectors read but never change anything (design.md roles; 21 CFR 11.10(d))', () => {
		for (const [permission, allowed] of Object.entries(permissionTable)) {
			const isRead = /\.(read|view)$/.test(permission) || permission === 'audit.export' || permission === 'profile.manage';
			if (!isRead) expect(allowed as readonly string[], permission).not.toContain('inspector');
		}
		expect(hasPermission(['inspector'], 'audit.read')).toBe(true);
	});

	it('never lets an admin sign GMP records: no execute, verify, approve, issue or release (design.md)', () => {
		for (const p of ['batch.execute', 'batch.verify', 'master.approve', 'batch.issue', 'batch.release', 'deviation.approve'] as const) {
			expect(hasPermission(['admin'], p), p).toBe(false);
		}
	});

	it('unions the permissions of several roles', () => {
		const both = permissionsOf(['operator', 'inspector']);
		expect(both).toContain('batch.execute');
		expect(both).toContain('audit.read');
		expect(permissionsOf([])).toEqual([]);
		expect(roles).toHaveLength(6);
	});
});
