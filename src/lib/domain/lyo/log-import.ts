/**
 * Reads a cycle log (CSV text from any data logger) into a CycleSeries through its mapping
 * (./mapping.ts). Pure and isomorphic: the server imports with it, the browser previews with it.
 *
 * Rules, each from the quirks of real logs (lyophilization.md, "Real cycle logs"):
 * - lines before `headerRow` are skipped (title, dryer name, export date ...);
 * - columns nobody mapped are ignored; a trailing delimiter (an empty last column) is harmless;
 * - a value listed in `placeholders` (e.g. 999.9), or an empty cell, is "no reading" (NaN);
 * - a clock time of day that falls back by more than 12 h is taken to have passed midnight and
 *   is unwrapped (+24 h); any other step back in time is an error, as is a time that repeats;
 * - every reading is converted exactly to the canonical unit of its role (°C, Pa).
 * Anything else that does not fit is refused with the line number and the reason
 * (CycleLogError), so a file is imported whole or not at all. Line numbers count physical lines
 * from 1; a quoted value spanning lines is not expected in a data log and would shift them.
 */
import Papa from 'papaparse';
import { toCanonical } from '../units';
import { canonicalUnitFor, DELIMITERS, MAX_LOG_BYTES, type CycleLogMapping } from './mapping';
import type { CycleSeries, SeriesChannel } from './series';

export class CycleLogError extends Error {
	/** 1-based line of the file, null when the problem is the file as a whole */
	readonly line: number | null;
	readonly reason: string;
	constructor(line: number | null, reason: string) {
		super(line === null ? reason : `line ${line}: ${reason}`);
		this.name = 'CycleLogError';
		this.line = line;
		this.reason = reason;
	}
}

export interface CycleLogImport {
	series: CycleSeries;
	/** the first row's time as written by the logger (iso, or clock with its start date); null for elapsed times */
	loggerStart: string | null;
	/** data rows read (blank lines not counted) */
	rows: number;
	/** readings dropped as placeholders or empty cells, per channel column */
	missing: Record<string, number>;
	/** times that passed midnight and were unwrapped (clock format) */
	midnightUnwraps: number;
	delimiter: string;
}

export interface ImportOptions {
	/** called with the fraction of the body parsed (0…1), at most once per chunk */
	onProgress?: (fraction: number) => void;
	/** size of the original file in bytes, when known (checked against MAX_LOG_BYTES) */
	byteLength?: number;
}

const HALF_DAY_S = 43_200;

/** The header row's cells and where the data begin, for the mapping step and the importer. */
export interface LogHeader {
	line: number;
	columns: string[];
	delimiter: string;
	/** offset in the text of the first character after the header line */
	bodyOffset: number;
}

/** Picks the delimiter that splits the header line into the most cells (ties: the order of DELIMITERS). */
export function detectDelimiter(line: string): string {
	let best: string = DELIMITERS[0];
	let bestCount = 0;
	for (const d of DELIMITERS) {
		const count = line.split(d).length - 1;
		if (count > bestCount) {
			best = d;
			bestCount = count;
		}
	}
	return best;
}

function stripBom(text: string): string {
	return text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
}

/** Finds line `headerRow` (1-based) and splits it into column names. */
export function readLogHeader(text: string, headerRow: number, delimiter?: string): LogHeader {
	const src = stripBom(text);
	if (src.trim() === '') throw new CycleLogError(null, 'the file is empty');
	let start = 0;
	for (let line = 1; line < headerRow; line++) {
		const nl = src.indexOf('\n', start);
		if (nl < 0) throw new CycleLogError(null, `the header row is set to line ${headerRow}, but the file has only ${line} line(s)`);
		start = nl + 1;
	}
	let end = src.indexOf('\n', start);
	if (end < 0) end = src.length;
	const raw = src.slice(start, end).replace(/\r$/, '');
	if (raw.trim() === '') throw new CycleLogError(headerRow, 'the header row is blank');
	const d = delimiter ?? detectDelimiter(raw);
	const parsed = Papa.parse<string[]>(raw, { delimiter: d });
	const columns = (parsed.data[0] ?? []).map((c) => c.trim());
	return { line: headerRow, columns, delimiter: d, bodyOffset: Math.min(end + 1, src.length) };
}

function countLines(text: string, from: number): number {
	let n = 0;
	for (let i = text.indexOf('\n', from); i >= 0; i = text.indexOf('\n', i + 1)) n++;
	return n + 1;
}

/** "12:34:56", "12:34:56.5" or "12:34" → seconds of the day; NaN when it is not a time of day. */
export function parseClock(cell: string): number {
	const m = /^(\d{1,2}):(\d{2})(?::(\d{2}(?:\.\d+)?))?$/.exec(cell);
	if (!m) return NaN;
	const h = Number(m[1]);
	const min = Number(m[2]);
	const s = m[3] === undefined ? 0 : Number(m[3]);
	if (h > 23 || min > 59 || s >= 60) return NaN;
	return h * 3600 + min * 60 + s;
}

/**
 * ISO 8601 date-time "YYYY-MM-DDTHH:MM[:SS[.fff]][Z|±HH[:]MM]" (a space may replace the T) →
 * seconds since the epoch; a time without an offset is read on the logger's own clock as if UTC,
 * which keeps differences exact (no daylight-saving guess). NaN when it does not match.
 */
export function parseIsoSeconds(cell: string): number {
	const m = /^(\d{4})-(\d{2})-(\d{2})[T ](\d{2}):(\d{2})(?::(\d{2}(?:\.\d+)?))?(Z|[+-]\d{2}:?\d{2})?$/.exec(cell);
	if (!m) return NaN;
	const [y, mo, d, h, mi] = [m[1], m[2], m[3], m[4], m[5]].map(Number);
	const s = m[6] === undefined ? 0 : Number(m[6]);
	if (mo < 1 || mo > 12 || d < 1 || d > 31 || h > 23 || mi > 59 || s >= 61) return NaN;
	let offset = 0;
	if (m[7] && m[7] !== 'Z') {
		const sign = m[7][0] === '-' ? -1 : 1;
		const digits = m[7].slice(1).replace(':', '');
		offset = sign * (Number(digits.slice(0, 2)) * 3600 + Number(digits.slice(2)) * 60);
	}
	return Date.UTC(y, mo - 1, d, h, mi) / 1000 + s - offset;
}

function describeTimeFormat(format: CycleLogMapping['time']['format']): string {
	switch (format) {
		case 'elapsed-seconds':
			return 'elapsed seconds';
		case 'elapsed-minutes':
			return 'elapsed minutes';
		case 'iso':
			return 'an ISO 8601 date and time';
		case 'clock':
			return 'a time of day (HH:MM:SS)';
	}
}

interface ChunkConfig {
	delimiter: string;
	chunkSize: number;
	chunk(results: Papa.ParseResult<string[]>, parser: Papa.Parser): void;
}

/**
 * Papa.parse on a string with a chunk callback: papaparse streams strings in chunks of
 * chunkSize (its StringStreamer) although its type declarations list chunk for files only.
 */
function parseInChunks(text: string, config: ChunkConfig): void {
	(Papa.parse as unknown as (input: string, config: ChunkConfig) => void)(text, config);
}

/** Imports a whole log; throws CycleLogError naming the first bad line. */
export function importCycleLog(text: string, mapping: CycleLogMapping, options: ImportOptions = {}): CycleLogImport {
	const bytes = options.byteLength ?? text.length;
	if (bytes > MAX_LOG_BYTES) {
		throw new CycleLogError(null, `the file is ${(bytes / 1048576).toFixed(1)} MB; the largest log accepted is ${MAX_LOG_BYTES / 1048576} MB`);
	}
	const src = stripBom(text);
	const header = readLogHeader(src, mapping.headerRow, mapping.delimiter);
	const { columns, delimiter } = header;
	const indexOf = (column: string): number => {
		const i = columns.indexOf(column);
		if (i >= 0) return i;
		const others = DELIMITERS.filter((d) => d !== delimiter && columns.length === 1 && columns[0].includes(d));
		const hint = others.length
			? ` The header row splits into one column only; the file looks delimited by "${others[0] === '\t' ? 'tab' : others[0]}", not "${delimiter === '\t' ? 'tab' : delimiter}".`
			: ` The header row has: ${columns.map((c) => `"${c}"`).join(', ')}.`;
		throw new CycleLogError(header.line, `column "${column}" is not in the header row.${hint}`);
	};
	const timeIndex = indexOf(mapping.time.column);
	const chans = mapping.channels.map((c) => ({ ...c, index: indexOf(c.column), canonical: canonicalUnitFor(c.role, c.unit) }));
	const maxIndex = Math.max(timeIndex, ...chans.map((c) => c.index));

	const capacity = countLines(src, header.bodyOffset);
	let t = new Float64Array(capacity);
	const values = chans.map(() => new Float64Array(capacity));
	const missing = chans.map(() => 0);
	const placeholders = new Set(mapping.placeholders);
	const decimalComma = mapping.decimalSeparator === ',';
	const format = mapping.time.format;
	const minutes = format === 'elapsed-minutes';

	let n = 0;
	let line = header.line;
	const state: { failure: CycleLogError | null } = { failure: null };
	let dayOffset = 0;
	let unwraps = 0;
	let prevRaw = NaN;
	let prevT = NaN;
	let firstAbs = NaN;
	let firstCell = '';
	const body = src.slice(header.bodyOffset);

	const readRow = (row: string[]): CycleLogError | null => {
		line++;
		if (row.length === 1 && row[0].trim() === '') return null; // a blank line
		if (row.length <= maxIndex) {
			return new CycleLogError(line, `the row has ${row.length} field(s), the header ${columns.length}; is the delimiter "${delimiter === '\t' ? 'tab' : delimiter}" right?`);
		}
		const cell = row[timeIndex].trim();
		let abs: number;
		if (format === 'iso') abs = parseIsoSeconds(cell);
		else if (format === 'clock') abs = parseClock(cell);
		else abs = cell === '' ? NaN : Number(decimalComma ? cell.replace(',', '.') : cell) * (minutes ? 60 : 1);
		if (!Number.isFinite(abs)) {
			return new CycleLogError(line, `time "${cell}" in column "${mapping.time.column}" is not ${describeTimeFormat(format)}`);
		}
		if (format === 'clock') {
			// Midnight reset: the clock fell back by more than half a day.
			if (n > 0 && abs < prevRaw && prevRaw - abs > HALF_DAY_S) {
				dayOffset += 86_400;
				unwraps++;
			}
			prevRaw = abs;
			abs += dayOffset;
		}
		if (n === 0) {
			firstAbs = abs;
			firstCell = cell;
		}
		const ti = abs - firstAbs;
		if (n > 0 && !(ti > prevT)) {
			return new CycleLogError(line, ti === prevT ? `time "${cell}" repeats the previous row's time` : `time "${cell}" goes backwards from the previous row`);
		}
		prevT = ti;
		t[n] = ti;
		for (let k = 0; k < chans.length; k++) {
			const c = chans[k];
			const text = row[c.index].trim();
			if (text === '') {
				values[k][n] = NaN;
				missing[k]++;
				continue;
			}
			const v = Number(decimalComma ? text.replace(',', '.') : text);
			if (!Number.isFinite(v)) return new CycleLogError(line, `"${text}" in column "${c.column}" is not a number`);
			if (placeholders.has(v)) {
				values[k][n] = NaN;
				missing[k]++;
				continue;
			}
			values[k][n] = toCanonical(v, c.unit);
		}
		n++;
		return null;
	};

	parseInChunks(body, {
		delimiter,
		chunkSize: 1 << 20,
		chunk(results: Papa.ParseResult<string[]>, parser: Papa.Parser) {
			const rows = results.data;
			for (let r = 0; r < rows.length; r++) {
				const problem = readRow(rows[r]);
				if (problem) {
					state.failure = problem;
					parser.abort();
					return;
				}
			}
			const quoteError = results.errors.find((e) => e.type === 'Quotes');
			if (quoteError) {
				state.failure = new CycleLogError(null, `unbalanced quotes near data row ${(quoteError.row ?? 0) + 1}`);
				parser.abort();
				return;
			}
			options.onProgress?.(Math.min(1, (results.meta.cursor ?? 0) / Math.max(1, body.length)));
		}
	});
	if (state.failure) throw state.failure;
	if (n < 2) throw new CycleLogError(null, `the log has ${n} data row(s) after the header row (line ${header.line}); at least 2 are needed`);
	if (n < capacity) t = t.slice(0, n);
	const channels: SeriesChannel[] = chans.map((c, k) => ({
		id: c.column,
		role: c.role,
		unit: c.canonical,
		values: n < capacity ? values[k].slice(0, n) : values[k]
	}));
	let loggerStart: string | null = null;
	if (format === 'iso') loggerStart = firstCell;
	else if (format === 'clock') loggerStart = `${mapping.time.start}T${firstCell}`;
	return {
		series: { t, channels },
		loggerStart,
		rows: n,
		missing: Object.fromEntries(chans.map((c, k) => [c.column, missing[k]])),
		midnightUnwraps: unwraps,
		delimiter
	};
}
