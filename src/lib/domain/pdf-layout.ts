/**
 * Pure text-flow helpers for the printed records (no pdf-lib, no I/O): line wrapping against a
 * width measure, and the page numbering every page carries. A printed copy must be complete and
 * readable (21 CFR 11.10(b): accurate and complete copies in human-readable form), so nothing is
 * cut off: a word too long for its column is broken, never clipped.
 */

/** Width of a text in points at the size the caller lays out in. */
export type Measure = (text: string) => number;

/**
 * Wraps text into lines no wider than `maxWidth`. Explicit line breaks are kept; runs of spaces
 * collapse to one between words; a word wider than the line is split by characters (code points,
 * so a character outside the BMP is never cut in half). An empty text gives one empty line.
 */
export function wrapText(text: string, maxWidth: number, measure: Measure): string[] {
	if (!(maxWidth > 0)) throw new RangeError('maxWidth must be positive');
	const out: string[] = [];
	for (const paragraph of text.replace(/\r\n?/g, '\n').split('\n')) {
		const words = paragraph.split(/[ \t]+/).filter((w) => w !== '');
		if (words.length === 0) {
			out.push('');
			continue;
		}
		let line = '';
		for (const word of words) {
			const candidate = line === '' ? word : `${line} ${word}`;
			if (measure(candidate) <= maxWidth) {
				line = candidate;
				continue;
			}
			if (line !== '') out.push(line);
			line = '';
			if (measure(word) <= maxWidth) {
				line = word;
				continue;
			}
			// Too long for any line: break it where it no longer fits.
			const pieces = breakWord(word, maxWidth, measure);
			out.push(...pieces.slice(0, -1));
			line = pieces[pieces.length - 1];
		}
		out.push(line);
	}
	return out;
}

function breakWord(word: string, maxWidth: number, measure: Measure): string[] {
	const chars = Array.from(word);
	const pieces: string[] = [];
	let piece = '';
	for (const c of chars) {
		if (piece !== '' && measure(piece + c) > maxWidth) {
			pieces.push(piece);
			piece = c;
		} else piece += c;
	}
	pieces.push(piece);
	return pieces;
}

/** "Page N of M" in the caller's words; N and M are checked so a footer can never lie. */
export function pageLabel(page: number, pages: number, words: (p: { page: number; pages: number }) => string = defaultPageWords): string {
	if (!Number.isInteger(page) || !Number.isInteger(pages) || page < 1 || page > pages) throw new RangeError(`page ${page} of ${pages} is not a page of the document`);
	return words({ page, pages });
}

function defaultPageWords(p: { page: number; pages: number }): string {
	return `Page ${p.page} of ${p.pages}`;
}

/**
 * Column widths for a table: each column's share of the width, rounded down to whole points,
 * the remainder given to the last column so the row is exactly `width` wide.
 */
export function columnWidths(width: number, shares: readonly number[]): number[] {
	const total = shares.reduce((a, b) => a + b, 0);
	if (!(total > 0) || shares.some((s) => !(s >= 0))) throw new RangeError('shares must be non-negative and not all zero');
	const widths = shares.map((s) => Math.floor((width * s) / total));
	widths[widths.length - 1] += width - widths.reduce((a, b) => a + b, 0);
	return widths;
}

/** Nice axis ticks (1, 2, 5 × 10^k steps) covering [lo, hi] with about `count` intervals. */
export function axisTicks(lo: number, hi: number, count = 5): number[] {
	if (!Number.isFinite(lo) || !Number.isFinite(hi)) return [];
	if (hi < lo) [lo, hi] = [hi, lo];
	if (hi === lo) return [lo];
	const raw = (hi - lo) / Math.max(1, count);
	const mag = 10 ** Math.floor(Math.log10(raw));
	const step = [1, 2, 5, 10].map((m) => m * mag).find((s) => s >= raw) ?? 10 * mag;
	const ticks: number[] = [];
	for (let v = Math.ceil(lo / step) * step; v <= hi + step * 1e-9; v += step) ticks.push(Number(v.toPrecision(12)));
	return ticks;
}

const formatters = new Map<string, Intl.DateTimeFormat>();

/**
 * When, as on every page of the app and on paper: ISO order in the site zone with its name — the
 * same text as formatInZone(at, zone, 'sv-SE') (./time.ts), with the formatter kept: making
 * an Intl.DateTimeFormat per call was the largest cost of a 5,000-event appendix.
 */
export function siteTime(at: string, timeZone: string): string {
	let f = formatters.get(timeZone);
	if (!f) {
		f = new Intl.DateTimeFormat('sv-SE', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit', second: '2-digit', hour12: false, timeZoneName: 'short' });
		formatters.set(timeZone, f);
	}
	return f.format(new Date(at));
}
