/** The column mapping schema of a cycle log (domain/lyo/mapping.ts; issue 7's JSON form). */
import { describe, expect, it } from 'vitest';
import { canonicalUnitFor, checkRoleUnit, cycleLogMappingSchema, describeMappingIssues } from '$lib/domain/lyo/mapping';

const base = {
	headerRow: 1,
	time: { column: 'Time', format: 'elapsed-seconds' },
	channels: [{ column: 'T1', role: 'shelf', unit: 'degC' }]
};

function issues(input: unknown): string[] {
	const r = cycleLogMappingSchema.safeParse(input);
	return r.success ? [] : describeMappingIssues(r.error);
}

describe('cycle-log mapping', () => {
	it('accepts the JSON of the issue and defaults placeholders to none', () => {
		const m = cycleLogMappingSchema.parse(base);
		expect(m.placeholders).toEqual([]);
		expect(cycleLogMappingSchema.parse({ ...base, time: { column: 'Time', format: 'clock', start: '2026-01-12' }, placeholders: [999.9] }).placeholders).toEqual([999.9]);
	});

	it('needs a start date for a clock time', () => {
		expect(issues({ ...base, time: { column: 'Time', format: 'clock' } })).toEqual(['time.start: a clock time needs the start date of the log (YYYY-MM-DD)']);
		expect(issues({ ...base, time: { column: 'Time', format: 'clock', start: '12.01.2026' } })).toHaveLength(1);
	});

	it('refuses a unit that does not fit the role, naming the column', () => {
		const found = issues({ ...base, channels: [{ column: 'P1', role: 'manometer', unit: 'degC' }] });
		expect(found).toEqual(['channels.0.unit: column "P1": role "manometer" is a pressure; unit "degC" is a temperature unit']);
		expect(checkRoleUnit('shelf', 'mbar')).toMatch(/temperature/);
		expect(checkRoleUnit('other', 'mbar')).toBeNull();
	});

	it('refuses a column mapped twice (also the time column), no channel, unknown keys and units', () => {
		expect(issues({ ...base, channels: [{ column: 'Time', role: 'shelf', unit: 'degC' }] })[0]).toMatch(/mapped twice/);
		expect(issues({ ...base, channels: [] })[0]).toMatch(/at least one channel/);
		expect(issues({ ...base, extra: 1 }).length).toBe(1);
		expect(issues({ ...base, channels: [{ column: 'T1', role: 'shelf', unit: 'celsius' }] }).length).toBe(1);
		expect(issues({ ...base, headerRow: 0 }).length).toBe(1);
	});

	it('refuses a decimal comma with a comma delimiter', () => {
		expect(issues({ ...base, decimalSeparator: ',' })[0]).toMatch(/decimal comma needs another delimiter/);
		expect(issues({ ...base, decimalSeparator: ',', delimiter: ';' })).toEqual([]);
	});

	it('stores each role in its canonical unit, and "other" by quantity', () => {
		expect(canonicalUnitFor('manometer', 'mTorr')).toBe('Pa');
		expect(canonicalUnitFor('product', 'K')).toBe('degC');
		expect(canonicalUnitFor('other', 'degF')).toBe('degC');
		expect(canonicalUnitFor('other', 'Torr')).toBe('Pa');
	});
});
