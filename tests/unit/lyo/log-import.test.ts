/**
 * Reading cycle logs (domain/lyo/log-import.ts). Logs here are small invented CSV texts. Unit
 * values are checked against their definitions: 1 mbar = 100 Pa and 1 µbar = 0.1 Pa (SI: 1 bar =
 * 10^5 Pa), 1 Torr = 101 325/760 Pa (standard atmosphere 101 325 Pa, ISO 80000-4), °F and K by
 * their defining offsets (NIST SP 811, 2008, B.8). ISO 8601 times are cross-checked with the
 * JavaScript Date parser.
 */
import { describe, expect, it } from 'vitest';
import { CycleLogError, detectDelimiter, importCycleLog, parseClock, parseIsoSeconds, readLogHeader } from '$lib/domain/lyo/log-import';
import { cycleLogMappingSchema, type CycleLogMappingInput } from '$lib/domain/lyo/mapping';

const map = (m: Partial<CycleLogMappingInput> = {}) =>
	cycleLogMappingSchema.parse({
		headerRow: 1,
		time: { column: 'Time', format: 'elapsed-seconds' },
		channels: [
			{ column: 'Shelf', role: 'shelf', unit: 'degC' },
			{ column: 'CM', role: 'manometer', unit: 'mbar' }
		],
		...m
	});

function failure(text: string, m = map()): CycleLogError {
	try {
		importCycleLog(text, m);
	} catch (e) {
		if (e instanceof CycleLogError) return e;
		throw e;
	}
	throw new Error('the log was accepted');
}

describe('log import', () => {
	it('reads a log with a preamble, a BOM, unmapped columns and a trailing delimiter', () => {
		const text = '\uFEFFInvented dryer export\nLYO-X\nTime,Shelf,Door,CM,\n0,-40.0,1,0.100,\n60,-39.5,1,0.095,\n120,,1,999.9,\n';
		const r = importCycleLog(text, map({ headerRow: 3, placeholders: [999.9] }));
		expect(Array.from(r.series.t)).toEqual([0, 60, 120]);
		expect(Array.from(r.series.channels[0].values.slice(0, 2))).toEqual([-40, -39.5]);
		// 0.1 mbar = 10 Pa (1 mbar = 100 Pa by definition)
		expect(r.series.channels[1].values[0]).toBeCloseTo(10, 12);
		expect(Number.isNaN(r.series.channels[0].values[2])).toBe(true);
		expect(Number.isNaN(r.series.channels[1].values[2])).toBe(true);
		expect(r.missing).toEqual({ Shelf: 1, CM: 1 });
		expect(r.loggerStart).toBeNull();
	});

	it('converts °F, K, Torr, mTorr and µbar exactly to °C and Pa', () => {
		const text = 'Time;F;K;Torr;mTorr;ubar\n0;32;273.15;1;100;100\n1;-40;0;0.1;760;1\n';
		const r = importCycleLog(
			text,
			map({
				channels: [
					{ column: 'F', role: 'product', unit: 'degF' },
					{ column: 'K', role: 'condenser', unit: 'K' },
					{ column: 'Torr', role: 'manometer', unit: 'Torr' },
					{ column: 'mTorr', role: 'pirani', unit: 'mTorr' },
					{ column: 'ubar', role: 'other', unit: 'ubar' }
				]
			})
		);
		expect(r.delimiter).toBe(';');
		const v = r.series.channels.map((c) => Array.from(c.values));
		expect(v[0][0]).toBeCloseTo(0, 12); // 32 °F = 0 °C
		expect(v[0][1]).toBeCloseTo(-40, 12); // −40 °F = −40 °C
		expect(v[1][0]).toBeCloseTo(0, 12); // 273.15 K = 0 °C
		expect(v[1][1]).toBeCloseTo(-273.15, 12);
		expect(v[2][0]).toBeCloseTo(101325 / 760, 9); // 1 Torr = 133.322 368… Pa
		expect(v[3][1]).toBeCloseTo(101.325, 9); // 760 mTorr = 101.325 Pa
		expect(v[4][0]).toBeCloseTo(10, 12); // 100 µbar = 10 Pa
	});

	it('reads elapsed minutes, ISO times with offsets, and a clock passing midnight', () => {
		const minutes = importCycleLog('Time,Shelf,CM\n0,1,1\n1.5,1,1\n', map({ time: { column: 'Time', format: 'elapsed-minutes' } }));
		expect(Array.from(minutes.series.t)).toEqual([0, 90]);
		const iso = importCycleLog('Time,Shelf,CM\n2026-01-12T23:59:30Z,1,1\n2026-01-13 01:00:30+01:00,1,1\n', map({ time: { column: 'Time', format: 'iso' } }));
		expect(Array.from(iso.series.t)).toEqual([0, 60]);
		expect(iso.loggerStart).toBe('2026-01-12T23:59:30Z');
		expect(parseIsoSeconds('2026-03-01T12:00:00.5+02:00')).toBe(Date.parse('2026-03-01T12:00:00.5+02:00') / 1000);
		const clock = importCycleLog('Time,Shelf,CM\n23:59:00,1,1\n23:59:59,1,1\n00:00:59,1,1\n', map({ time: { column: 'Time', format: 'clock', start: '2026-01-12' } }));
		expect(Array.from(clock.series.t)).toEqual([0, 59, 119]);
		expect(clock.midnightUnwraps).toBe(1);
		expect(clock.loggerStart).toBe('2026-01-12T23:59:00');
		expect(parseClock('24:00:00')).toBeNaN();
		expect(parseClock('7:05')).toBe(7 * 3600 + 5 * 60);
	});

	it('reads a decimal comma with a semicolon delimiter', () => {
		const r = importCycleLog('Time;Shelf;CM\n0;-40,5;0,1\n1;-40,25;0,2\n', map({ delimiter: ';', decimalSeparator: ',' }));
		expect(Array.from(r.series.channels[0].values)).toEqual([-40.5, -40.25]);
	});

	it('refuses bad input with the line and the reason', () => {
		expect(failure('Time,Shelf,CM\n0,1,1\n1,abc,1\n')).toMatchObject({ line: 3, reason: '"abc" in column "Shelf" is not a number' });
		expect(failure('Time,Shelf,CM\n0,1,1\n10,1,1\n5,1,1\n')).toMatchObject({ line: 4, reason: expect.stringMatching(/goes backwards/) });
		expect(failure('Time,Shelf,CM\n0,1,1\n0,1,1\n')).toMatchObject({ line: 3, reason: expect.stringMatching(/repeats/) });
		expect(failure('Time,Shelf,CM\n0,1,1\nnoon,1,1\n')).toMatchObject({ line: 3, reason: expect.stringMatching(/not elapsed seconds/) });
		expect(failure('Time,Shelf\n0,1\n1,1\n')).toMatchObject({ line: 1, reason: expect.stringMatching(/column "CM" is not in the header row/) });
		// the wrong delimiter is named
		expect(failure('Time;Shelf;CM\n0;1;1\n1;1;1\n', map({ delimiter: ',' })).reason).toMatch(/delimited by ";"/);
		expect(failure('Time,Shelf,CM\n0,1,1\n1,1\n')).toMatchObject({ line: 3, reason: expect.stringMatching(/2 field\(s\)/) });
		expect(failure('')).toMatchObject({ line: null, reason: 'the file is empty' });
		expect(failure('Time,Shelf,CM\n0,1,1\n')).toMatchObject({ line: null, reason: expect.stringMatching(/1 data row/) });
		expect(failure('a\nb', map({ headerRow: 5 })).reason).toMatch(/the file has only 2 line/);
	});

	it('refuses a file over the size limit before reading it', () => {
		expect(() => importCycleLog('Time,Shelf,CM\n0,1,1\n1,1,1\n', map(), { byteLength: 100 * 1024 * 1024 })).toThrow(/100\.0 MB; the largest log accepted is 64 MB/);
	});

	it('reports progress up to the whole body', () => {
		const rows = ['Time,Shelf,CM', ...Array.from({ length: 5000 }, (_, i) => `${i},${i % 7},0.1`)].join('\n');
		const seen: number[] = [];
		importCycleLog(rows, map(), { onProgress: (f) => seen.push(f) });
		expect(seen.length).toBeGreaterThan(0);
		expect(seen[seen.length - 1]).toBeCloseTo(1, 6);
		expect(seen.every((f, i) => i === 0 || f >= seen[i - 1])).toBe(true);
	});

	it('detects the delimiter and reads the header row', () => {
		expect(detectDelimiter('a\tb\tc')).toBe('\t');
		expect(detectDelimiter('a|b|c')).toBe('|');
		expect(readLogHeader('x\nTime,A,B\n1,2,3', 2).columns).toEqual(['Time', 'A', 'B']);
	});
});
