import { describe, expect, it } from 'vitest';
import { dateInZone, formatInZone } from '$lib/domain/time';

// Source: Directive 2000/84/EC, arts. 2–3 — summer time begins at 01:00 UTC on the last Sunday of
// March (29 March 2026) and ends at 01:00 UTC on the last Sunday of October (25 October 2026);
// IANA tz database zone Europe/Berlin: CET = UTC+1, CEST = UTC+2. Times are kept in UTC and shown
// in the site zone (docs/time-source.md; 21 CFR 11.50(a)(2)).
describe('a known UTC instant shown in the site time zone across summer-time changes', () => {
	it('shows 00:59:59 UTC on 29 March 2026 as 01:59:59 CET and 01:00:00 UTC as 03:00:00 CEST', () => {
		expect(formatInZone('2026-03-29T00:59:59Z', 'Europe/Berlin')).toBe('29/03/2026, 01:59:59 CET');
		expect(formatInZone('2026-03-29T01:00:00Z', 'Europe/Berlin')).toBe('29/03/2026, 03:00:00 CEST');
	});

	it('shows 00:59:59 UTC on 25 October 2026 as 02:59:59 CEST and 01:00:00 UTC as 02:00:00 CET (the hour repeats)', () => {
		expect(formatInZone('2026-10-25T00:59:59Z', 'Europe/Berlin')).toBe('25/10/2026, 02:59:59 CEST');
		expect(formatInZone('2026-10-25T01:00:00Z', 'Europe/Berlin')).toBe('25/10/2026, 02:00:00 CET');
	});

	it('gives the same instant the same text whatever zone the server runs in, and UTC unchanged', () => {
		// The server's own TZ is not the site's: only the zone argument matters.
		expect(formatInZone(new Date(Date.UTC(2026, 2, 29, 1, 0, 0)), 'Europe/Berlin')).toBe('29/03/2026, 03:00:00 CEST');
		expect(formatInZone('2026-03-29T01:00:00Z', 'UTC')).toBe('29/03/2026, 01:00:00 UTC');
	});

	it('puts an instant just before midnight UTC on the next calendar day at the site', () => {
		// 22:30 UTC on 28 March 2026 is 23:30 CET; 22:30 UTC on 29 March is 00:30 CEST on the 30th.
		expect(dateInZone(new Date('2026-03-28T22:30:00Z'), 'Europe/Berlin')).toBe('2026-03-28');
		expect(dateInZone(new Date('2026-03-29T22:30:00Z'), 'Europe/Berlin')).toBe('2026-03-30');
	});
});
