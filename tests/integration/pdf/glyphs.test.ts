import { describe, expect, test } from 'vitest';
import { spawnSync } from 'node:child_process';
import { StandardFonts } from 'pdf-lib';
import { Flow } from '$lib/server/pdf/layout';
import { saveTemp, textOf } from './support';

/**
 * Glyphs must be drawn, not only mapped: a broken font subset still extracts as text (ToUnicode,
 * ISO 32000-1 9.10.3) while the page shows blanks, so text extraction alone cannot catch it.
 * poppler renders the page and we count ink against the same text in a standard PDF font
 * (Helvetica, ISO 32000-1 9.6.2.2, drawn by poppler's own built-in metrics and outlines).
 */
const LINE = { H: 'HHHHHHHHHH', umlauts: 'ÄÖÜäöüßµ°±', symbols: '≤≥≤≥≤≥≤≥≤≥' };

/** Dark pixels per horizontal band of page 1 rendered at 72 dpi, grey (PGM P5). */
function inkOf(path: string, bands: { top: number; bottom: number }[]): number[] {
	const r = spawnSync('/usr/bin/pdftoppm', ['-r', '72', '-gray', '-f', '1', '-l', '1', path], { maxBuffer: 64 * 1024 * 1024 });
	if (r.status !== 0) throw new Error(`pdftoppm failed: ${r.stderr}`);
	const buf = r.stdout as Buffer;
	const header = /^P5\s+(\d+)\s+(\d+)\s+(\d+)\s/.exec(buf.subarray(0, 40).toString('latin1'));
	if (!header) throw new Error('not a PGM');
	const [, w, , ] = header.map(Number);
	const data = buf.subarray(header[0].length);
	return bands.map(({ top, bottom }) => {
		let n = 0;
		for (let y = top; y < bottom; y++) for (let x = 0; x < w; x++) if (data[y * w + x] < 128) n++;
		return n;
	});
}

// Baselines 100 pt apart; at 72 dpi a point is a pixel, row = page height − y.
function band(y: number) {
	const row = Math.round(841.89 - y);
	return { top: row - 22, bottom: row + 8 };
}

describe('printed glyphs', () => {
	test('Noto Sans draws Latin, umlauts, µ ° ± with ink like Helvetica, and ≤ ≥ through the fallback font', async () => {
		const flow = await Flow.create({ header: '' });
		flow.drawLine(LINE.H, 50, 700, { size: 20 });
		flow.drawLine(LINE.umlauts, 50, 600, { size: 20 });
		flow.drawLine(LINE.symbols, 50, 500, { size: 20 });
		const helvetica = await flow.doc.embedFont(StandardFonts.Helvetica);
		flow.page.drawText(LINE.H, { x: 50, y: 400, size: 20, font: helvetica });
		flow.page.drawText(LINE.umlauts, { x: 50, y: 300, size: 20, font: helvetica });
		const path = saveTemp(await flow.doc.save(), 'glyphs.pdf');
		const [h, umlauts, symbols, refH, refUmlauts] = inkOf(path, [band(700), band(600), band(500), band(400), band(300)]);
		expect(refH).toBeGreaterThan(200);
		expect(h / refH).toBeGreaterThan(0.5);
		expect(h / refH).toBeLessThan(2);
		expect(umlauts / refUmlauts).toBeGreaterThan(0.5);
		expect(umlauts / refUmlauts).toBeLessThan(2);
		// Ten ≤/≥ glyphs: two strokes each at 20 pt leave well over 100 dark pixels.
		expect(symbols).toBeGreaterThan(100);
		const text = textOf(path);
		expect(text).toContain(LINE.umlauts);
		expect(text).toContain(LINE.symbols);
		expect(text).not.toContain('[U+');
	});
});
