import { describe, expect, test } from 'vitest';
import fc from 'fast-check';
import { axisTicks, columnWidths, pageLabel, siteTime, wrapText } from '$lib/domain/pdf-layout';
import { formatInZone } from '$lib/domain/time';

// A monospace measure: every code point is 1 unit wide, so expected lines can be worked out by hand.
const mono = (s: string) => Array.from(s).length;

describe('wrapText', () => {
	// Worked by hand: "the quick brown fox" in 10 units → "the quick" (9), "brown fox" (9).
	test('breaks between words at the width', () => {
		expect(wrapText('the quick brown fox', 10, mono)).toEqual(['the quick', 'brown fox']);
	});

	test('keeps explicit line breaks and empty lines, collapsing runs of spaces', () => {
		expect(wrapText('a  b\n\nc', 10, mono)).toEqual(['a b', '', 'c']);
		expect(wrapText('', 10, mono)).toEqual(['']);
	});

	test('breaks a word longer than a line by characters, never losing one', () => {
		expect(wrapText('ab 0123456789abc', 5, mono)).toEqual(['ab', '01234', '56789', 'abc']);
	});

	// Code points, not UTF-16 units: an astral character is never split into surrogate halves.
	test('never splits a character outside the BMP', () => {
		const lines = wrapText('𝜇𝜇𝜇𝜇𝜇', 2, mono);
		expect(lines).toEqual(['𝜇𝜇', '𝜇𝜇', '𝜇']);
	});

	test('µ, °, ≤ and umlauts pass through unchanged', () => {
		expect(wrapText('Größe ≤ 5 µg bei 21 °C', 100, mono)).toEqual(['Größe ≤ 5 µg bei 21 °C']);
	});

	// Property: no line is wider than the width, and the words come back in order (nothing dropped).
	test('no line exceeds the width and every non-space character survives', () => {
		fc.assert(
			fc.property(fc.string({ unit: fc.constantFrom('a', 'b', 'ü', '≤', ' ', '\n'), maxLength: 200 }), fc.integer({ min: 1, max: 30 }), (text, width) => {
				const lines = wrapText(text, width, mono);
				for (const l of lines) expect(mono(l)).toBeLessThanOrEqual(width);
				expect(lines.join('').replace(/\s/g, '')).toBe(text.replace(/\s/g, ''));
			})
		);
	});

	test('refuses a width that is not positive', () => {
		expect(() => wrapText('x', 0, mono)).toThrow(RangeError);
	});
});

describe('pageLabel', () => {
	test('says "Page N of M" and refuses a page outside the document', () => {
		expect(pageLabel(1, 12)).toBe('Page 1 of 12');
		expect(pageLabel(12, 12)).toBe('Page 12 of 12');
		expect(pageLabel(2, 3, (p) => `Seite ${p.page} von ${p.pages}`)).toBe('Seite 2 von 3');
		expect(() => pageLabel(0, 3)).toThrow(RangeError);
		expect(() => pageLabel(4, 3)).toThrow(RangeError);
		expect(() => pageLabel(1.5, 3)).toThrow(RangeError);
	});
});

describe('columnWidths', () => {
	test('shares the width in proportion and adds up exactly', () => {
		expect(columnWidths(100, [1, 1, 2])).toEqual([25, 25, 50]);
		const w = columnWidths(499.28, [27, 35, 20, 18]);
		expect(w.reduce((a, b) => a + b, 0)).toBeCloseTo(499.28, 10);
		expect(() => columnWidths(100, [0, 0])).toThrow(RangeError);
	});
});

describe('axisTicks', () => {
	// 1-2-5 steps (common practice for chart axes): 0…48 h in about 10 intervals → every 5 h.
	test('gives 1-2-5 steps covering the range', () => {
		expect(axisTicks(0, 48, 10)).toEqual([0, 5, 10, 15, 20, 25, 30, 35, 40, 45]);
		expect(axisTicks(-47.3, 31.2, 6)).toEqual([-40, -20, 0, 20]);
		expect(axisTicks(3, 3)).toEqual([3]);
		expect(axisTicks(Number.NaN, 1)).toEqual([]);
	});
});

describe('siteTime', () => {
	// Must print exactly what the app prints elsewhere (formatInZone, 'sv-SE'), only faster.
	test('equals formatInZone for instants either side of a DST change and in other zones', () => {
		// 2026-03-29 01:00 UTC: Europe/Berlin changes from CET to CEST (EU summer time, Directive 2000/84/EC).
		for (const at of ['2026-03-29T00:59:59.000Z', '2026-03-29T01:00:00.000Z', '2026-12-02T00:54:16.219Z']) {
			for (const zone of ['Europe/Berlin', 'UTC', 'America/New_York', 'Asia/Kolkata']) expect(siteTime(at, zone)).toBe(formatInZone(at, zone, 'sv-SE'));
		}
		expect(siteTime('2026-03-29T00:59:59.000Z', 'Europe/Berlin')).toBe('2026-03-29 01:59:59 CET');
		expect(siteTime('2026-03-29T01:00:00.000Z', 'Europe/Berlin')).toBe('2026-03-29 03:00:00 CEST');
	});
});
