import { describe, expect, test } from 'vitest';
import { safeRedirectPath } from '$lib/server/auth/redirect';
import { readBearerToken } from '$lib/server/auth/token';
import { formatManifestation, isGmpMeaning, signatureMeanings } from '$lib/domain/signature';
import { hasPermission, permissionTable, roles, type Permission } from '$lib/domain/permissions';

describe('return after sign-in, without an open redirect (OWASP Cheat Sheet "Unvalidated Redirects and Forwards")', () => {
	test('same-site paths are kept, with their query', () => {
		expect(safeRedirectPath('/batches/B-1?tab=steps')).toBe('/batches/B-1?tab=steps');
		expect(safeRedirectPath('/')).toBe('/');
	});
	test.each(['https://evil.example/', '//evil.example/x', '/\\evil.example', '\\\\evil.example', 'javascript:alert(1)', '/\r\nSet-Cookie:x', 'evil', '', null, '/login', '/logout'])('%s goes to /', (bad) => {
		expect(safeRedirectPath(bad as string | null)).toBe('/');
	});
});

describe('API tokens: Authorization: Bearer (RFC 6750 §2.1)', () => {
	test('reads the b64token; rejects other schemes and junk', () => {
		expect(readBearerToken('Bearer rbk_abc-DEF_123')).toBe('rbk_abc-DEF_123');
		expect(readBearerToken('Basic dXNlcjpwYXNz')).toBeNull();
		expect(readBearerToken('Bearer two words')).toBeNull();
		expect(readBearerToken(null)).toBeNull();
	});
});

describe('signature manifestation (21 CFR 11.50(a)(1)–(3); Annex 11, 14: time zone)', () => {
	// Reference instant: 2026-05-03T12:22:05Z is 14:22:05 CEST in Berlin (UTC+2 in summer, EU rule
	// of Directive 2000/84/EC: summer time from the last Sunday in March).
	test('printed name, meaning, local date and time with zone abbreviation and IANA name, and UTC', () => {
		const m = formatManifestation({ printedName: 'Priya Halden', meaning: 'approved', at: '2026-05-03T12:22:05.123Z', timeZone: 'Europe/Berlin' });
		expect(m.text).toBe('Priya Halden · Approved · 2026-05-03 14:22:05 CEST (Europe/Berlin)');
		expect(m.utc).toBe('2026-05-03 12:22:05 UTC');
	});
	test('winter time and a translated meaning label', () => {
		const m = formatManifestation({ printedName: 'Dario Kettleby', meaning: 'verified', at: '2026-01-10T07:00:00Z', timeZone: 'Europe/Berlin' }, { meaningLabel: 'Bestätigt' });
		expect(m.when).toBe('2026-01-10 08:00:00 CET (Europe/Berlin)');
		expect(m.meaning).toBe('Bestätigt');
	});
	test('the acknowledgement is the only meaning that is not a GMP signature', () => {
		expect(Object.keys(signatureMeanings).filter((k) => !isGmpMeaning(k as keyof typeof signatureMeanings))).toEqual(['acknowledged']);
	});
});

describe('permission table (design.md roles; 21 CFR 11.10(d), (g))', () => {
	const changing = (Object.keys(permissionTable) as Permission[]).filter((p) => !p.endsWith('.read') && !['today.view', 'profile.manage', 'audit.export'].includes(p));
	test('inspectors read everything and change nothing', () => {
		for (const p of Object.keys(permissionTable) as Permission[]) if (p.endsWith('.read')) expect(hasPermission(['inspector'], p)).toBe(true);
		for (const p of changing) expect(hasPermission(['inspector'], p), p).toBe(false);
	});
	test('admins manage users and settings but hold no GMP record permission', () => {
		for (const p of ['user.manage', 'settings.manage', 'equipment.manage'] as Permission[]) expect(hasPermission(['admin'], p)).toBe(true);
		for (const p of ['master.author', 'master.approve', 'batch.issue', 'batch.execute', 'batch.verify', 'batch.release', 'deviation.approve', 'review.perform'] as Permission[]) {
			expect(hasPermission(['admin'], p), p).toBe(false);
		}
	});
	test('every role appears in the table and every permission names known roles', () => {
		for (const r of roles) expect(Object.values(permissionTable).some((list) => (list as readonly string[]).includes(r))).toBe(true);
		for (const list of Object.values(permissionTable)) for (const r of list) expect(roles).toContain(r);
	});
});
