import { describe, expect, it } from 'vitest';
import { dateInZone, formatInZone } from '$lib/domain/time';

describe('site time', () => {
	// IANA tz database: Europe/Berlin is UTC+1 in winter (CET) and UTC+2 in summer (CEST);
	// America/New_York is UTC−5 in winter (EST).
	it('gives the calendar date at the site, not at UTC', () => {
		expect(dateInZone(new Date('2026-12-01T23:30:00Z'), 'Europe/Berlin')).toBe('2026-12-02');
		expect(dateInZone(new Date('2026-12-01T03:00:00Z'), 'America/New_York')).toBe('2026-11-30');
		expect(dateInZone(new Date('2026-12-01T03:00:00Z'), 'UTC')).toBe('2026-12-01');
	});

	it('shows an instant with the zone, as a signature manifestation needs (21 CFR 11.50(a)(2))', () => {
		const text = formatInZone('2026-07-01T10:00:00Z', 'Europe/Berlin');
		expect(text).toContain('12:00:00');
		expect(text).toMatch(/CEST|GMT\+2/);
	});
});
