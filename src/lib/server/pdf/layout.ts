import { PDFDocument, rgb, type PDFFont, type PDFPage, type RGB } from 'pdf-lib';
import { columnWidths, pageLabel, wrapText } from '$lib/domain/pdf-layout';
import { embedFonts, fontRuns, type Fonts, type Run } from './fonts';

/**
 * Text flow over A4 pages: paragraphs and table rows that wrap, break to a new page when they do
 * not fit, and a header and "page N of M" footer drawn on every page once the page count is known
 * (21 CFR 11.10(b): a complete, readable copy; a page that goes missing from a printout shows).
 */
export const A4 = { width: 595.28, height: 841.89 } as const;
export const MARGIN = { left: 48, right: 48, top: 62, bottom: 54 } as const;
export const CONTENT_WIDTH = A4.width - MARGIN.left - MARGIN.right;

export const INK = rgb(0.1, 0.12, 0.16);
export const MUTED = rgb(0.38, 0.42, 0.48);
export const ALERT = rgb(0.72, 0.12, 0.1);
export const RULE = rgb(0.78, 0.8, 0.84);

export interface TextStyle {
	size?: number;
	bold?: boolean;
	color?: RGB;
	/** Draws a line through the text: a corrected value stays readable (EU GMP Ch. 4.9). */
	strike?: boolean;
}

export interface Cell extends TextStyle {
	text: string;
}

export interface FlowOptions {
	header: string;
	pageWords?: (p: { page: number; pages: number }) => string;
	footerLeft?: string;
}

export class Flow {
	readonly doc: PDFDocument;
	readonly fonts: Fonts;
	page!: PDFPage;
	/** Baseline cursor, measured from the page bottom (PDF user space, ISO 32000-1 8.3.2.3). */
	y = 0;
	/** Called after each new page, e.g. to repeat a table's column heads. */
	onPage: (() => void) | null = null;
	private readonly widths = new Map<PDFFont, Map<string, number>>();
	private readonly options: FlowOptions;

	private constructor(doc: PDFDocument, fonts: Fonts, options: FlowOptions) {
		this.doc = doc;
		this.fonts = fonts;
		this.options = options;
		for (const font of [fonts.regular, fonts.bold, fonts.fallbackRegular, fonts.fallbackBold]) if (font) memoizeEncoding(font);
		this.newPage();
	}

	static async create(options: FlowOptions): Promise<Flow> {
		const doc = await PDFDocument.create();
		return new Flow(doc, await embedFonts(doc), options);
	}

	newPage(): void {
		this.page = this.doc.addPage([A4.width, A4.height]);
		this.y = A4.height - MARGIN.top;
		this.onPage?.();
	}

	/** Starts a new page unless `height` points still fit above the bottom margin. */
	ensure(height: number): void {
		if (this.y - height < MARGIN.bottom) this.newPage();
	}

	gap(points: number): void {
		this.y -= points;
	}

	font(style: TextStyle): PDFFont {
		return style.bold ? this.fonts.bold : this.fonts.regular;
	}

	runs(text: string, style: TextStyle): Run[] {
		return fontRuns(text, this.font(style), style.bold ? this.fonts.fallbackBold : this.fonts.fallbackRegular);
	}

	/** Width at size 1 of each space-separated token, summed: exact with kerning off (fonts.ts). */
	measure(text: string, style: TextStyle = {}): number {
		const font = this.font(style);
		let cache = this.widths.get(font);
		if (!cache) this.widths.set(font, (cache = new Map()));
		const size = style.size ?? 9;
		let total = 0;
		const tokens = text.split(' ');
		for (const token of tokens) {
			let w = cache.get(token);
			if (w === undefined) {
				w = 0;
				for (const run of this.runs(token, style)) w += run.font.widthOfTextAtSize(run.text, 1);
				cache.set(token, w);
			}
			total += w;
		}
		let space = cache.get(' ');
		if (space === undefined) cache.set(' ', (space = font.widthOfTextAtSize(' ', 1)));
		return (total + space * (tokens.length - 1)) * size;
	}

	wrap(text: string, width: number, style: TextStyle = {}): string[] {
		return wrapText(text, width, (t) => this.measure(t, style));
	}

	lineHeight(style: TextStyle = {}): number {
		return (style.size ?? 9) * 1.32;
	}

	drawLine(text: string, x: number, y: number, style: TextStyle = {}): void {
		if (text === '') return;
		const size = style.size ?? 9;
		let at = x;
		for (const run of this.runs(text, style)) {
			this.page.drawText(run.text, { x: at, y, size, font: run.font, color: style.color ?? INK });
			at += this.measure(run.text, style);
		}
		if (style.strike) {
			const w = this.measure(text, style);
			const mid = y + size * 0.3;
			this.page.drawLine({ start: { x, y: mid }, end: { x: x + w, y: mid }, thickness: 0.7, color: style.color ?? INK });
		}
	}

	/** A wrapped paragraph at the left margin (plus indent), breaking pages between lines. */
	text(text: string, style: TextStyle & { indent?: number; after?: number } = {}): void {
		const indent = style.indent ?? 0;
		const lh = this.lineHeight(style);
		for (const line of this.wrap(text, CONTENT_WIDTH - indent, style)) {
			this.ensure(lh);
			this.y -= lh;
			this.drawLine(line, MARGIN.left + indent, this.y + lh * 0.24, style);
		}
		this.y -= style.after ?? 2;
	}

	heading(text: string, level: 1 | 2 | 3 = 2): void {
		const size = level === 1 ? 15 : level === 2 ? 12 : 10;
		// Keep a heading with at least two lines of what follows.
		this.ensure(size * 1.5 + (level === 1 ? 60 : 30));
		this.gap(level === 1 ? 6 : 4);
		this.text(text, { size, bold: true, after: level === 3 ? 1 : 3 });
	}

	/**
	 * One table row: cells wrap within their column; the row moves to a new page whole unless it
	 * is taller than a page, so a value is never separated from its label.
	 */
	row(cells: Cell[], shares: readonly number[], options: { indent?: number; rule?: boolean; fill?: RGB } = {}): void {
		const indent = options.indent ?? 0;
		const widths = columnWidths(CONTENT_WIDTH - indent, shares);
		const pad = 3;
		const laid = cells.map((c, i) => ({ c, lines: c.text === '' ? [] : this.wrap(c.text, Math.max(8, widths[i] - 2 * pad), c), lh: this.lineHeight(c) }));
		const height = Math.max(...laid.map((l) => l.lines.length * l.lh), this.lineHeight()) + 3;
		if (height <= A4.height - MARGIN.top - MARGIN.bottom) this.ensure(height);
		if (options.fill) this.page.drawRectangle({ x: MARGIN.left + indent, y: this.y - height, width: CONTENT_WIDTH - indent, height, color: options.fill });
		let x = MARGIN.left + indent;
		const top = this.y;
		laid.forEach(({ c, lines, lh }, i) => {
			let y = top;
			for (const line of lines) {
				y -= lh;
				if (y < MARGIN.bottom - 2) {
					// A single cell longer than a page: continue it on the next one.
					this.newPage();
					y = this.y - lh;
				}
				this.drawLine(line, x + pad, y + lh * 0.24, c);
			}
			x += widths[i];
		});
		this.y = Math.min(this.y, top - height);
		if (options.rule !== false) this.page.drawLine({ start: { x: MARGIN.left + indent, y: this.y }, end: { x: MARGIN.left + CONTENT_WIDTH, y: this.y }, thickness: 0.3, color: RULE });
	}

	/** Header and footer on every page; call once, when the content is complete. */
	finish(): void {
		const pages = this.doc.getPages();
		pages.forEach((page, i) => {
			this.page = page;
			const label = pageLabel(i + 1, pages.length, this.options.pageWords);
			this.drawLine(this.options.header, MARGIN.left, A4.height - 34, { size: 8, color: MUTED });
			page.drawLine({ start: { x: MARGIN.left, y: A4.height - 40 }, end: { x: A4.width - MARGIN.right, y: A4.height - 40 }, thickness: 0.5, color: RULE });
			page.drawLine({ start: { x: MARGIN.left, y: 38 }, end: { x: A4.width - MARGIN.right, y: 38 }, thickness: 0.5, color: RULE });
			if (this.options.footerLeft) this.drawLine(this.options.footerLeft, MARGIN.left, 26, { size: 7.5, color: MUTED });
			this.drawLine(label, A4.width - MARGIN.right - this.measure(label, { size: 8 }), 26, { size: 8 });
		});
	}
}

/**
 * pdf-lib shapes a text with fontkit each time it encodes it; a record repeats the same names,
 * actions and units thousands of times. The encoding of a string never changes within one
 * document (its glyphs are added to the subset on the first call), so it is kept.
 */
function memoizeEncoding(font: PDFFont): void {
	const original = font.encodeText.bind(font);
	const cache = new Map<string, ReturnType<PDFFont['encodeText']>>();
	font.encodeText = (text: string) => {
		let encoded = cache.get(text);
		if (!encoded) {
			encoded = original(text);
			cache.set(text, encoded);
		}
		return encoded;
	};
}
