import { createHash } from 'node:crypto';
import { createWriteStream } from 'node:fs';
import { createInterface } from 'node:readline';
import { Transform, type Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { createGunzip, createGzip } from 'node:zlib';
import type { Executor, Tx } from '../db/client';
import { queryRows } from '../audit/rows';
import { quoteIdent, type TableInfo } from './catalog';
import { BackupRefusedError } from './errors';

/**
 * Table rows in a portable, exact form: one line per row, each a JSON string holding the row's
 * PostgreSQL text form (`row::text`, the composite literal). PostgreSQL's text input and output are
 * made to round-trip for every built-in type (bytea as hex, timestamptz with its offset, float8 in
 * its shortest exact form with extra_float_digits = 1, jsonb, arrays; NULL and the empty string and
 * jsonb 'null' stay distinct), and the JSON string keeps each row on one line whatever it holds.
 * The same text loads into PGlite and into a PostgreSQL server with the same migrations. Nothing
 * here parses a row in JavaScript, so no value passes through a JS number or string conversion.
 */

/** Session settings that fix the text form (set in the dump's and the load's transaction). */
export const PORTABLE_SETTINGS = [
	"set local timezone = 'UTC'",
	"set local datestyle = 'ISO, YMD'",
	"set local intervalstyle = 'iso_8601'",
	'set local extra_float_digits = 1',
	"set local bytea_output = 'hex'"
];

export async function applyPortableSettings(tx: Executor): Promise<void> {
	for (const statement of PORTABLE_SETTINGS) await queryRows(tx, statement, []);
}

const FETCH = 2000;

/** Writes one table as gzip'd lines to `path`; returns rows, bytes and SHA-256 of the file. */
export async function dumpTable(tx: Tx, table: TableInfo, path: string): Promise<{ rows: number; bytes: number; sha256: string }> {
	const cursor = 'rimebook_backup_rows';
	const order = table.orderBy.map(quoteIdent).join(', ');
	await queryRows(tx, `declare ${cursor} no scroll cursor for select pg_catalog.to_json(r::text)::text from ${quoteIdent(table.name)} as r order by ${order}`, []);
	let rows = 0;
	async function* lines() {
		for (;;) {
			const batch = await queryRows<[string]>(tx, `fetch forward ${FETCH} from ${cursor}`, []);
			if (batch.length === 0) break;
			rows += batch.length;
			yield batch.map((r) => r[0]).join('\n') + '\n';
			if (batch.length < FETCH) break;
		}
	}
	const hash = createHash('sha256');
	let bytes = 0;
	const tap = new Transform({
		transform(chunk: Buffer, _enc, done) {
			hash.update(chunk);
			bytes += chunk.length;
			done(null, chunk);
		}
	});
	await pipeline(lines, createGzip({ level: 6 }), tap, createWriteStream(path));
	await queryRows(tx, `close ${cursor}`, []);
	return { rows, bytes, sha256: hash.digest('hex') };
}

const BATCH_ROWS = 1000;
const BATCH_CHARS = 8 << 20;

/**
 * Loads one table part (a gzip stream of row lines) in batches; a self-referencing table in one
 * statement, because its immediate foreign key is checked at the end of each statement. The
 * SHA-256 of the compressed bytes is computed again while loading and compared by the caller, so
 * a file changed between the check and the load cannot slip in.
 */
export async function loadTable(tx: Tx, table: TableInfo, source: Readable): Promise<{ rows: number; sha256: string }> {
	const hash = createHash('sha256');
	source.on('data', (chunk: Buffer) => hash.update(chunk));
	const gunzip = createGunzip();
	source.pipe(gunzip);
	source.on('error', (err) => gunzip.destroy(err));
	const cols = table.columns.map(quoteIdent).join(', ');
	const picks = table.columns.map((c) => `(r).${quoteIdent(c)}`).join(', ');
	const overriding = table.identityAlways ? ' overriding system value' : '';
	// OFFSET 0 keeps the planner from inlining the cast once per column.
	const insert = `insert into ${quoteIdent(table.name)} (${cols})${overriding} select ${picks} from (select v::${quoteIdent(table.name)} as r from pg_catalog.json_array_elements_text($1::json) as e(v) offset 0) as s`;
	let rows = 0;
	let batch: string[] = [];
	let chars = 0;
	const flush = async () => {
		if (batch.length === 0) return;
		await queryRows(tx, insert, [`[${batch.join(',')}]`]);
		rows += batch.length;
		batch = [];
		chars = 0;
	};
	try {
		for await (const line of createInterface({ input: gunzip, crlfDelay: Infinity })) {
			if (line === '') continue;
			batch.push(line);
			chars += line.length;
			if (!table.selfReferencing && (batch.length >= BATCH_ROWS || chars >= BATCH_CHARS)) await flush();
		}
	} catch (cause) {
		if (cause instanceof BackupRefusedError) throw cause;
		throw new BackupRefusedError(`db/${table.name}.jsonl.gz`, 'damaged', `Part db/${table.name}.jsonl.gz cannot be read (${cause instanceof Error ? cause.message : String(cause)}).`);
	}
	await flush();
	return { rows, sha256: hash.digest('hex') };
}

/** Streams a file and returns its size and SHA-256 (FIPS 180-4). */
export async function hashStream(source: Readable): Promise<{ bytes: number; sha256: string }> {
	const hash = createHash('sha256');
	let bytes = 0;
	for await (const chunk of source as AsyncIterable<Buffer>) {
		hash.update(chunk);
		bytes += chunk.length;
	}
	return { bytes, sha256: hash.digest('hex') };
}

