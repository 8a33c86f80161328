/**
 * The validation summary as a PDF (pdf-lib + fontkit, Noto Sans TTF; /work/shared/toolchain.md):
 * the same facts as the HTML, laid out for A4 print with page numbers, so a site can file it
 * with its validation report (Annex 11 §8.1: clear printed copies).
 */
import fontkit from '@pdf-lib/fontkit';
import { PDFDocument, rgb, type PDFFont, type PDFPage, type RGB } from 'pdf-lib';
import { totalsOf, type Evaluation, type RefResult, type RowResult } from './evaluate';
import { describeRun, describeTested, formatUtc, isBad, REF_MARK, REQUIREMENT_MARK, ROW_MARK, type Mark, type ReportMeta } from './summary';

const A4: [number, number] = [595.28, 841.89];
const MARGIN = 48;
const INK = rgb(0.08, 0.13, 0.18);
const MUTED = rgb(0.36, 0.41, 0.46);
const OK = rgb(0.11, 0.37, 0.23);
const BAD = rgb(0.64, 0.14, 0.11);
const ACCENT = rgb(0.29, 0.53, 0.72);

// OpenType shaping dominates fontkit's drawText; Latin text needs none of it (toolchain.md).
// The fonts are embedded whole: with `subset: true` pdf-lib 1.17.1 dropped most glyphs of
// Noto Sans here (pdftoppm showed only a few letters per line), and took 4× longer.
const FEATURES = { liga: false, kern: false, calt: false, clig: false, rlig: false, mark: false, mkmk: false, ccmp: false, locl: false };

/** Characters Noto Sans lacks, spelled with ones it has. */
const SPELL: Record<string, string> = { '→': '->', '←': '<-', '≤': '<=', '≥': '>=', '≠': '!=', '✓': 'ok', '✕': 'x', '●': '•', '○': 'o', '◆': '•', '≈': '~', '“': '"', '”': '"' };

interface Fonts {
	regular: PDFFont;
	bold: PDFFont;
	has: (codePoint: number) => boolean;
}

class Writer {
	readonly pages: PDFPage[] = [];
	private page!: PDFPage;
	private y = 0;
	constructor(
		private doc: PDFDocument,
		private fonts: Fonts
	) {
		this.newPage();
	}

	private newPage() {
		this.page = this.doc.addPage(A4);
		this.pages.push(this.page);
		this.y = A4[1] - MARGIN;
	}

	/** Text the font can draw: no control characters, missing glyphs spelled out or '?'. */
	clean(text: string): string {
		let out = '';
		// eslint-disable-next-line no-control-regex
		for (const ch of text.replace(/[\u0000-\u001f\u007f]+/g, ' ')) {
			const cp = ch.codePointAt(0)!;
			out += this.fonts.has(cp) ? ch : (SPELL[ch] ?? '?');
		}
		return out;
	}

	private wrap(text: string, font: PDFFont, size: number, width: number): string[] {
		const lines: string[] = [];
		let line = '';
		for (const word of this.clean(text).split(/\s+/).filter(Boolean)) {
			const next = line ? `${line} ${word}` : word;
			if (font.widthOfTextAtSize(next, size) <= width) {
				line = next;
				continue;
			}
			if (line) lines.push(line);
			// A word longer than the line (a long file path) is broken by characters.
			let rest = word;
			while (font.widthOfTextAtSize(rest, size) > width) {
				let n = rest.length - 1;
				while (n > 1 && font.widthOfTextAtSize(rest.slice(0, n), size) > width) n--;
				lines.push(rest.slice(0, n));
				rest = rest.slice(n);
			}
			line = rest;
		}
		if (line) lines.push(line);
		return lines.length ? lines : [''];
	}

	ensure(height: number) {
		if (this.y - height < MARGIN + 14) this.newPage();
	}

	gap(h: number) {
		this.y -= h;
	}

	text(text: string, o: { size?: number; bold?: boolean; color?: RGB; indent?: number } = {}) {
		const size = o.size ?? 9;
		const font = o.bold ? this.fonts.bold : this.fonts.regular;
		const x = MARGIN + (o.indent ?? 0);
		const lead = size * 1.35;
		for (const line of this.wrap(text, font, size, A4[0] - MARGIN - x)) {
			this.ensure(lead);
			this.y -= lead;
			this.page.drawText(line, { x, y: this.y, size, font, color: o.color ?? INK });
		}
	}

	/** A verdict: its shape drawn as a vector, then its word; never colour alone. */
	mark(m: Mark, verdict: string, after: string, indent = 0) {
		const bad = isBad(verdict);
		const color = bad ? BAD : OK;
		const size = 9;
		const lead = size * 1.35;
		this.ensure(lead);
		const x = MARGIN + indent;
		const cy = this.y - lead + 3;
		if (m.shape === 'dot') this.page.drawCircle({ x: x + 3.5, y: cy, size: 3.2, color });
		else if (m.shape === 'ring') this.page.drawCircle({ x: x + 3.5, y: cy, size: 3, borderColor: color, borderWidth: 1 });
		else if (m.shape === 'diamond') this.page.drawSvgPath('M 3.5 -3.8 L 7.3 0 L 3.5 3.8 L -0.3 0 Z', { x, y: cy, color });
		else {
			this.page.drawLine({ start: { x: x + 0.5, y: cy - 3 }, end: { x: x + 6.5, y: cy + 3 }, thickness: 1.4, color });
			this.page.drawLine({ start: { x: x + 0.5, y: cy + 3 }, end: { x: x + 6.5, y: cy - 3 }, thickness: 1.4, color });
		}
		const word = `${m.word}  `;
		const font = this.fonts.bold;
		const wordWidth = font.widthOfTextAtSize(word, size);
		this.page.drawText(word, { x: x + 11, y: this.y - lead, size, font, color });
		const lines = this.wrap(after, this.fonts.regular, size, A4[0] - MARGIN - x - 11 - wordWidth);
		this.y -= lead;
		this.page.drawText(lines[0], { x: x + 11 + wordWidth, y: this.y, size, font: this.fonts.regular, color: INK });
		const restText = lines.slice(1).join(' ');
		if (restText) this.text(restText, { indent: indent + 11 + wordWidth });
	}

	heading(text: string) {
		this.ensure(40);
		this.gap(10);
		this.text(text, { size: 13, bold: true });
		this.page.drawLine({ start: { x: MARGIN, y: this.y - 3 }, end: { x: A4[0] - MARGIN, y: this.y - 3 }, thickness: 1.2, color: ACCENT });
		this.gap(8);
	}
}

/** Markdown code spans to plain text. */
function plain(text: string): string {
	return text.replace(/`/g, '').replace(/\*\*/g, '');
}

function writeRefs(w: Writer, refs: RefResult[], indent: number) {
	for (const r of refs) {
		const runs = r.matches.length > 1 ? ` (${r.matches.length} runs)` : '';
		w.mark(REF_MARK[r.verdict], r.verdict, `${r.ref.file} › ${r.ref.title}${runs}`, indent);
		for (const m of r.matches.filter((x) => x.outcome !== 'passed')) w.text(`${m.status}: ${m.message ?? m.fullName}`, { indent: indent + 11, color: BAD, size: 8 });
	}
}

function writeRow(w: Writer, r: RowResult, title: string) {
	w.ensure(60);
	w.gap(4);
	w.text(title, { bold: true, size: 10 });
	w.mark(ROW_MARK[r.verdict], r.verdict, r.row.requirements.length ? `requirements ${r.row.requirements.join(', ')}` : '', 0);
	if (r.row.asks) w.text(`Asks: ${plain(r.row.asks)}`, { indent: 11 });
	if (r.row.how) w.text(`Met by: ${plain(r.row.how)}`, { indent: 11 });
	if (r.row.siteProcedure) w.text(`Site procedure: ${plain(r.row.siteProcedure)}`, { indent: 11 });
	if (r.row.notApplicable) w.text(`Not applicable: ${plain(r.row.notApplicable)}`, { indent: 11 });
	writeRefs(w, r.refs, 11);
}

export async function renderPdf(e: Evaluation, meta: ReportMeta, font: { regular: Uint8Array; bold: Uint8Array }): Promise<Uint8Array> {
	const doc = await PDFDocument.create();
	doc.registerFontkit(fontkit);
	const face = fontkit.create(font.regular);
	const fonts: Fonts = {
		regular: await doc.embedFont(font.regular, { subset: false, features: FEATURES }),
		bold: await doc.embedFont(font.bold, { subset: false, features: FEATURES }),
		has: (cp) => face.hasGlyphForCodePoint(cp)
	};
	doc.setTitle(`Rimebook validation summary ${meta.version}`);
	doc.setSubject(`Commit ${meta.commit}`);
	doc.setProducer('Rimebook compliance:report');
	doc.setCreationDate(new Date(meta.generatedAt));

	const w = new Writer(doc, fonts);
	const t = totalsOf(e);
	w.text('Rimebook validation summary', { size: 18, bold: true });
	w.gap(6);
	if (e.problems.length === 0) w.mark(ROW_MARK.proven, 'proven', 'Every clause is covered and every test the matrix names passed in this run.');
	else w.mark(ROW_MARK.failed, 'failed', `NOT VALID: ${e.problems.length} problem${e.problems.length === 1 ? '' : 's'} (listed below).`);
	w.gap(6);
	const facts: [string, string][] = [
		['Version', meta.version],
		['Commit', `${meta.commit}${meta.dirty ? ' (with uncommitted changes in the working tree)' : ''}`],
		['Tested commit', describeTested(meta)],
		['Unit and integration run', describeRun(meta.vitest, meta.vitestSource)],
		['End-to-end run', describeRun(meta.playwright, meta.playwrightSource)],
		['Built', formatUtc(meta.generatedAt)],
		['Clauses', `${t.clauses.total}: ${t.clauses.proven + t.clauses['proven + site procedure']} proven by tests, ${t.clauses['site procedure']} by site procedure alone, ${t.clauses['not applicable']} not applicable, ${t.clauses.failed + t.clauses.empty} failed`],
		['Requirements', `${t.requirements.total}: ${t.requirements.proven} proven, ${t.requirements['site procedure']} by site procedure, ${t.requirements.planned} planned, ${t.requirements.failed} failed, ${t.requirements.untraced} not traced`],
		['Tests named', `${t.refs.total}: ${t.refs.passed} passed, ${t.refs.failed} failed, ${t.refs.missing} not in the run, ${t.refs['no-run']} without a run`]
	];
	for (const [k, v] of facts) w.text(`${k}: ${v}`);

	if (e.problems.length) {
		w.heading('Problems');
		e.problems.forEach((p, i) => w.text(`${i + 1}. ${plain(p)}`, { color: BAD }));
	}
	w.heading('Clauses');
	for (const r of e.clauses) writeRow(w, r, r.row.clause);
	w.heading('Requirements');
	for (const r of e.requirements) {
		w.ensure(40);
		w.gap(3);
		w.text(`${r.requirement.id}: ${plain(r.requirement.text)}`, { bold: true });
		const clauses = r.clauses;
		w.mark(REQUIREMENT_MARK[r.verdict], r.verdict, clauses.length ? `clauses: ${plain(clauses.join('; '))}` : '');
		const tests = [...new Map(r.rows.flatMap((x) => x.refs).map((x) => [`${x.ref.file} › ${x.ref.title}`, x])).values()];
		writeRefs(w, tests, 11);
	}
	w.heading('Requirements to tests');
	for (const r of e.details) writeRow(w, r, `${plain(r.row.clause)} (traceability.md line ${r.row.line})`);

	const n = w.pages.length;
	w.pages.forEach((page, i) => {
		const label = `Rimebook ${meta.version} · ${meta.commit.slice(0, 12)} · validation summary · page ${i + 1} of ${n}`;
		page.drawText(label, { x: MARGIN, y: MARGIN / 2, size: 7.5, font: fonts.regular, color: MUTED });
	});
	return doc.save();
}
