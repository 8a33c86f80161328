/**
 * Reads the compliance pack's Markdown (compliance/requirements.md, compliance/traceability.md)
 * into plain data. Pure: strings in, objects out, so the same parser serves the unit tests,
 * tests/unit/foundation/compliance.test.ts and `npm run compliance:report` (21 CFR 11.10(k):
 * the documentation that proves the system is itself checked).
 */

/** One `file › title` reference to a test, as written in the matrix. */
export interface TestRef {
	file: string;
	title: string;
}

export interface Requirement {
	id: string;
	text: string;
	section: string;
	/** Marked *planned* in requirements.md: not built or not proven yet, so not expected in the matrix. */
	planned: boolean;
	/** Marked *withdrawn*: dropped, its ID kept so it is never reused. */
	withdrawn: boolean;
}

export interface MatrixRow {
	/** The `## ` heading the table sits under. */
	section: string;
	/** 1-based line in traceability.md, for messages a person can act on. */
	line: number;
	clause: string;
	asks: string;
	how: string;
	requirements: string[];
	refs: TestRef[];
	/** What the site must do itself, when the row says "site procedure: …". */
	siteProcedure: string | null;
	/** Why the clause does not apply, when the row says "not applicable: …". */
	notApplicable: string | null;
}

/** The section of traceability.md that holds one row per regulation clause. */
export const CLAUSE_SECTION = 'Clauses';

/** A test reference: `tests/… › title`, inside backticks. */
const REF = /`(tests\/[^`›]+?)\s*›\s*([^`]+)`/g;
const REQUIREMENT_ID = /\bURS-[A-Z]+-\d{2}\b/g;

export function parseRefs(text: string): TestRef[] {
	return [...text.matchAll(REF)].map((m) => ({ file: m[1].trim(), title: m[2].trim() }));
}

/** Splits a Markdown table row on `|`, but not on a `|` inside backticks or escaped as `\|`. */
export function splitRow(line: string): string[] {
	const cells: string[] = [];
	let cell = '';
	let inCode = false;
	const body = line.trim().replace(/^\|/, '').replace(/\|$/, '');
	for (let i = 0; i < body.length; i++) {
		const c = body[i];
		if (c === '\\' && body[i + 1] === '|') {
			cell += '|';
			i++;
		} else if (c === '`') {
			inCode = !inCode;
			cell += c;
		} else if (c === '|' && !inCode) {
			cells.push(cell.trim());
			cell = '';
		} else cell += c;
	}
	cells.push(cell.trim());
	return cells;
}

const SEPARATOR = /^\|?\s*:?-{3,}:?\s*(\|\s*:?-{3,}:?\s*)*\|?$/;

interface Table {
	section: string;
	header: string[];
	rows: { line: number; cells: string[] }[];
}

function readTables(markdown: string): Table[] {
	const lines = markdown.split(/\r?\n/);
	const tables: Table[] = [];
	let section = '';
	let current: Table | null = null;
	for (let i = 0; i < lines.length; i++) {
		const line = lines[i];
		const heading = /^#{2,3}\s+(.+?)\s*$/.exec(line);
		if (heading) {
			section = heading[1];
			current = null;
			continue;
		}
		if (!line.trim().startsWith('|')) {
			current = null;
			continue;
		}
		if (!current) {
			if (i + 1 < lines.length && SEPARATOR.test(lines[i + 1].trim())) {
				current = { section, header: splitRow(line).map((h) => h.toLowerCase()), rows: [] };
				tables.push(current);
				i++; // the separator
			}
			continue;
		}
		current.rows.push({ line: i + 1, cells: splitRow(line) });
	}
	return tables;
}

function column(header: string[], ...words: string[]): number {
	return header.findIndex((h) => words.some((w) => h.includes(w)));
}

/** Text after a marker such as "site procedure:" up to the next test reference or the end. */
function markerText(cell: string, marker: RegExp): string | null {
	const m = marker.exec(cell);
	if (!m) return null;
	const rest = cell.slice(m.index + m[0].length);
	const cut = rest.search(/`tests\//);
	return (cut < 0 ? rest : rest.slice(0, cut)).replace(/[;\s]+$/, '').trim() || m[0];
}

export function parseRequirements(markdown: string): Requirement[] {
	const out: Requirement[] = [];
	for (const table of readTables(markdown)) {
		const id = column(table.header, 'id');
		const text = column(table.header, 'requirement');
		if (id < 0 || text < 0) continue;
		for (const row of table.rows) {
			const rid = row.cells[id]?.trim() ?? '';
			if (!/^URS-[A-Z]+-\d{2}$/.test(rid)) continue;
			const words = row.cells[text] ?? '';
			out.push({ id: rid, text: words, section: table.section, planned: /\*planned\b/i.test(words), withdrawn: /\*withdrawn\b/i.test(words) });
		}
	}
	return out;
}

export function parseMatrix(markdown: string): MatrixRow[] {
	const out: MatrixRow[] = [];
	for (const table of readTables(markdown)) {
		const clause = column(table.header, 'clause');
		const evidence = column(table.header, 'evidence', 'tests');
		if (clause < 0 || evidence < 0) continue;
		const requirement = column(table.header, 'requirement');
		const how = column(table.header, 'how');
		const asks = column(table.header, 'asks');
		for (const row of table.rows) {
			const cell = (i: number) => (i >= 0 ? (row.cells[i] ?? '') : '');
			const ev = cell(evidence);
			out.push({
				section: table.section,
				line: row.line,
				clause: cell(clause).replace(/\*\*/g, '').trim(),
				asks: cell(asks),
				how: cell(how),
				requirements: [...new Set(cell(requirement).match(REQUIREMENT_ID) ?? [])],
				refs: parseRefs(ev),
				siteProcedure: markerText(ev, /site procedure:?/i),
				notApplicable: markerText(ev, /not applicable:?/i)
			});
		}
	}
	return out;
}

export interface MatrixProblem {
	line: number | null;
	message: string;
}

/**
 * Checks of the documents themselves, before any test run is looked at: every listed clause has
 * a row, every row claims something, and every requirement it names exists.
 */
export function checkMatrix(rows: MatrixRow[], requirements: Requirement[], clauses: readonly string[]): MatrixProblem[] {
	const problems: MatrixProblem[] = [];
	const known = new Set(requirements.map((r) => r.id));
	const clauseRows = rows.filter((r) => r.section === CLAUSE_SECTION);
	const seen = new Map<string, number>();
	for (const row of clauseRows) {
		const before = seen.get(row.clause);
		if (before !== undefined) problems.push({ line: row.line, message: `${row.clause} has a second row in the clause table (first at line ${before})` });
		else seen.set(row.clause, row.line);
	}
	for (const c of clauses) {
		if (!seen.has(c)) problems.push({ line: null, message: `${c} has no row in the clause table ("## ${CLAUSE_SECTION}" of traceability.md)` });
	}
	for (const row of rows) {
		if (row.refs.length === 0 && !row.siteProcedure && !row.notApplicable) {
			problems.push({ line: row.line, message: `${row.clause || 'a row'} names no test, no site procedure and no reason it does not apply` });
		}
		for (const id of row.requirements) {
			if (!known.has(id)) problems.push({ line: row.line, message: `${row.clause} names ${id}, which requirements.md does not define` });
		}
	}
	const traced = new Set(rows.flatMap((r) => r.requirements));
	for (const r of requirements) {
		if (!r.planned && !r.withdrawn && !traced.has(r.id)) problems.push({ line: null, message: `${r.id} is in requirements.md but no matrix row traces it (mark it *planned* if it is not built yet)` });
	}
	return problems;
}
