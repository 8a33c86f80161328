import { describe, expect, it } from 'vitest';
import { defaultPreferences, displayUnitFor, formatWhen, readPreferences } from '$lib/domain/batch/preferences';

describe('display preferences (preferences.ts)', () => {
	it('falls back to the defaults (°C, Pa, 24 h) for anything unreadable, and keeps what is valid', () => {
		expect(defaultPreferences).toEqual({ temperatureUnit: 'degC', pressureUnit: 'Pa', timeFormat: '24h' });
		expect(readPreferences(null)).toEqual(defaultPreferences);
		expect(readPreferences({ temperatureUnit: 'degR' })).toEqual(defaultPreferences);
		expect(readPreferences({ pressureUnit: 'mTorr' })).toEqual({ ...defaultPreferences, pressureUnit: 'mTorr' });
	});

	// design.md "Units": stored canonical (°C, Pa), shown in the preferred unit; other quantities as stored.
	it('shows temperatures and pressures in the preferred unit, other quantities as they are', () => {
		const prefs = { temperatureUnit: 'K', pressureUnit: 'mbar', timeFormat: '24h' } as const;
		expect(displayUnitFor('degC', prefs)).toBe('K');
		expect(displayUnitFor('Pa', prefs)).toBe('mbar');
		expect(displayUnitFor('g', prefs)).toBe('g');
	});

	// EU Directive 2000/84/EC art. 2: summer time begins at 01:00 UTC on the last Sunday of March
	// (29 March 2026), so 01:30 UTC is 03:30 CEST in Berlin; 11.50(a)(2): the time of signing is shown.
	it('formats instants in the site zone with its name, in 24 h or 12 h', () => {
		const at = '2026-03-29T01:30:00Z';
		expect(formatWhen(at, 'Europe/Berlin', { timeFormat: '24h' })).toBe('29/03/2026, 03:30 CEST');
		expect(formatWhen(at, 'Europe/Berlin', { timeFormat: '12h' })).toMatch(/^29\/03\/2026, 03:30\s?am CEST$/);
		// Half an hour earlier summer time had not begun: 00:59 UTC is 01:59 CET.
		expect(formatWhen('2026-03-29T00:59:00Z', 'Europe/Berlin', { timeFormat: '24h' })).toBe('29/03/2026, 01:59 CET');
	});
});
