import { existsSync, readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { join } from 'node:path';
import fontkit from '@pdf-lib/fontkit';
import { PDFHexString, type PDFDocument, type PDFFont } from 'pdf-lib';

/**
 * Noto Sans as TTF (the WOFF2 of @fontsource crashes fontkit's subsetter, toolchain.md), embedded
 * so every character of a record prints: µ, °, ≤, ±, umlauts, Greek, arrows. A
 * standard PDF font (WinAnsi) cannot encode most of them.
 */
const FILES = {
	regular: '@expo-google-fonts/noto-sans/400Regular/NotoSans_400Regular.ttf',
	bold: '@expo-google-fonts/noto-sans/700Bold/NotoSans_700Bold.ttf'
} as const;

/**
 * Noto Sans (Google Fonts build) has no ≤ ≥ → ✓ and other symbols. Those come from DejaVu Sans
 * (Debian package fonts-dejavu-core), or a TTF named by RIMEBOOK_PDF_FALLBACK_FONT(_BOLD); a
 * character neither font has is printed as its code point, [U+2264], never silently dropped.
 */
const FALLBACK = {
	regular: process.env.RIMEBOOK_PDF_FALLBACK_FONT || '/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf',
	bold: process.env.RIMEBOOK_PDF_FALLBACK_FONT_BOLD || process.env.RIMEBOOK_PDF_FALLBACK_FONT || '/usr/share/fonts/truetype/dejavu/DejaVuSans-Bold.ttf'
};

const bytes = new Map<string, Uint8Array>();

function fontBytes(spec: string): Uint8Array {
	let b = bytes.get(spec);
	if (!b) {
		let path: string;
		if (spec.startsWith('/')) path = spec;
		else {
			try {
				path = createRequire(import.meta.url).resolve(spec);
			} catch {
				path = join(process.cwd(), 'node_modules', spec);
			}
		}
		b = new Uint8Array(readFileSync(path));
		bytes.set(spec, b);
	}
	return b;
}

// OpenType shaping dominates drawText with an embedded font (toolchain.md: 3.6× faster with
// these off). Latin record text needs none of them; kerning off only widens text slightly.
const FEATURES = { liga: false, kern: false, calt: false, clig: false, rlig: false, mark: false, mkmk: false, ccmp: false, locl: false };

export interface Fonts {
	regular: PDFFont;
	bold: PDFFont;
	/** Symbols Noto Sans lacks; null when no fallback font is installed. */
	fallbackRegular: PDFFont | null;
	fallbackBold: PDFFont | null;
}

export async function embedFonts(doc: PDFDocument): Promise<Fonts> {
	doc.registerFontkit(fontkit);
	// Noto Sans is embedded whole: fontkit's subset of it (pdf-lib 1.17.1, @pdf-lib/fontkit 1.1.1)
	// maps the text correctly (pdftotext reads it) but draws most glyphs blank. DejaVu subsets cleanly.
	const [regular, bold] = await Promise.all([
		doc.embedFont(fontBytes(FILES.regular), { subset: false, features: FEATURES }),
		doc.embedFont(fontBytes(FILES.bold), { subset: false, features: FEATURES })
	]);
	installCmapEncoding(regular, fontBytes(FILES.regular));
	installCmapEncoding(bold, fontBytes(FILES.bold));
	const fallback = (path: string) => (existsSync(path) ? doc.embedFont(fontBytes(path), { subset: true, features: FEATURES }) : Promise.resolve(null));
	const [fallbackRegular, fallbackBold] = await Promise.all([fallback(FALLBACK.regular), fallback(FALLBACK.bold)]);
	return { regular, bold, fallbackRegular, fallbackBold };
}

export interface Run {
	text: string;
	font: PDFFont;
}

// Keyed weakly: each rendered PDF embeds its own PDFFont objects, which hold their whole
// document. A Map here kept every PDF ever rendered alive (found by the 300-run hostile soak, which
// ran the process out of heap after about 11 minutes of audit-report renders).
const coverage = new WeakMap<PDFFont, Set<number>>();

function covers(font: PDFFont, cp: number): boolean {
	let set = coverage.get(font);
	if (!set) coverage.set(font, (set = new Set(font.getCharacterSet())));
	return set.has(cp);
}

/** Splits a text into runs by the font that has each character (primary first, then fallback). */
export function fontRuns(text: string, primary: PDFFont, fallback: PDFFont | null): Run[] {
	const runs: Run[] = [];
	let current: Run | null = null;
	for (const ch of text) {
		const cp = ch.codePointAt(0)!;
		let font = primary;
		let piece = ch;
		if ((cp < 0x20 || cp > 0x7e) && !covers(primary, cp)) {
			if (fallback && covers(fallback, cp)) font = fallback;
			else piece = `[U+${cp.toString(16).toUpperCase().padStart(4, '0')}]`;
		}
		if (current && current.font === font) current.text += piece;
		else runs.push((current = { text: piece, font }));
	}
	return runs;
}

const cmaps = new Map<Uint8Array, { ids: Map<number, string>; widths: Map<number, number>; font: ReturnType<typeof fontkit.create> }>();

/**
 * Encodes and measures a whole-embedded font straight from its cmap, a glyph per code point,
 * cached: with every OpenType feature off (FEATURES) that is exactly what fontkit's layout gives,
 * at a fraction of its cost (toolchain.md: shaping dominates drawText). The glyph ids are those of
 * the embedded font file, as its CIDs (Identity-H, ISO 32000-1 9.7.5.2); widths in 1/em.
 */
function installCmapEncoding(pdfFont: PDFFont, bytes: Uint8Array): void {
	let cmap = cmaps.get(bytes);
	if (!cmap) cmaps.set(bytes, (cmap = { ids: new Map(), widths: new Map(), font: fontkit.create(bytes) }));
	const { ids, widths, font } = cmap;
	const glyphOf = (cp: number): string => {
		let id = ids.get(cp);
		if (id === undefined) {
			const g = font.glyphForCodePoint(cp);
			id = g.id.toString(16).toUpperCase().padStart(4, '0');
			ids.set(cp, id);
			widths.set(cp, g.advanceWidth / font.unitsPerEm);
		}
		return id;
	};
	pdfFont.encodeText = (text: string) => {
		let hex = '';
		for (const ch of text) hex += glyphOf(ch.codePointAt(0)!);
		return PDFHexString.of(hex);
	};
	pdfFont.widthOfTextAtSize = (text: string, size: number) => {
		let w = 0;
		for (const ch of text) {
			const cp = ch.codePointAt(0)!;
			glyphOf(cp);
			w += widths.get(cp)!;
		}
		return w * size;
	};
}
