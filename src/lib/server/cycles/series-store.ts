import { createHash } from 'node:crypto';
import { and, asc, eq, inArray, is, sql } from 'drizzle-orm';
import { PgliteTransaction } from 'drizzle-orm/pglite';
import type { Transaction as PGliteTransaction } from '@electric-sql/pglite';
import { buildOverview, type SeriesOverview } from '$lib/domain/lyo/overview';
import type { ChannelRole, CycleSeries, SeriesChannel } from '$lib/domain/lyo/series';
import type { CanonicalUnit } from '$lib/domain/units';
import type { Executor, Tx } from '../db/client';
import { cycleOverview, cycleSeries } from '../db/schema';

// Float64Array bytes are stored little-endian (tables/cycles.ts); every platform Node runs on
// here is little-endian, and a big-endian one is refused rather than storing swapped bytes.
const LITTLE_ENDIAN = new Uint8Array(new Float64Array([1]).buffer)[7] === 0x3f;

function encode(values: Float64Array): Uint8Array {
	if (!LITTLE_ENDIAN) throw new Error('cycle series storage needs a little-endian platform');
	return new Uint8Array(values.buffer, values.byteOffset, values.byteLength);
}

function decode(bytes: Uint8Array): Float64Array {
	if (!LITTLE_ENDIAN) throw new Error('cycle series storage needs a little-endian platform');
	if (bytes.byteLength % 8 !== 0) throw new Error('a stored series is not a whole number of float64 values');
	// Copy: a driver's Buffer may start at an offset that is not a multiple of 8.
	const copy = new Uint8Array(bytes.byteLength);
	copy.set(bytes);
	return new Float64Array(copy.buffer);
}

/**
 * SHA-256 over the stored bytes in ordinal order (time axis first), with each channel's column,
 * role and unit: recorded in the run's audit event, so the stored series can be shown later to
 * be the one imported.
 */
export function hashSeries(series: CycleSeries): string {
	const h = createHash('sha256');
	h.update(encode(series.t));
	for (const c of series.channels) {
		h.update(`\n${c.id}\n${c.role}\n${c.unit ?? ''}\n`);
		h.update(encode(c.values));
	}
	return h.digest('hex');
}

/**
 * PGlite's transaction client, when `tx` runs on PGlite: its COPY FROM '/dev/blob' takes raw
 * bytes, the fastest way in (≈ 0.5 s for 26 MB here, against ≈ 1.6 s as hex text and ≈ 0.9 s as
 * base64; PGlite 0.5.16 docs, "query options: blob").
 */
function pgliteClient(tx: Tx): PGliteTransaction | null {
	if (!is(tx, PgliteTransaction)) return null;
	return (tx as unknown as { session: { client: PGliteTransaction } }).session.client;
}

interface SeriesRow {
	runId: string;
	ordinal: number;
	column: string;
	role: string;
	unit: string;
	data: Uint8Array;
}

/** PostgreSQL's binary COPY format (PostgreSQL 15 docs, COPY, "Binary Format") for text, int4, text, text, text, bytea. */
function encodeCopyRows(rows: readonly SeriesRow[]): Blob {
	const parts: Uint8Array<ArrayBuffer>[] = [];
	const head = Buffer.alloc(19);
	head.write('PGCOPY\n\xff\r\n\0', 0, 'latin1');
	parts.push(head); // flags and header-extension length: zero
	for (const r of rows) {
		const texts = [r.runId, r.column, r.role, r.unit].map((x) => Buffer.from(x, 'utf8'));
		const meta = Buffer.alloc(2 + 4 * 6 + 4 + texts.reduce((a, b) => a + b.length, 0));
		let o = meta.writeInt16BE(6, 0);
		o = meta.writeInt32BE(texts[0].length, o);
		o += texts[0].copy(meta, o);
		o = meta.writeInt32BE(4, o);
		o = meta.writeInt32BE(r.ordinal, o);
		for (const x of texts.slice(1)) {
			o = meta.writeInt32BE(x.length, o);
			o += x.copy(meta, o);
		}
		meta.writeInt32BE(r.data.byteLength, o);
		parts.push(meta, r.data as Uint8Array<ArrayBuffer>);
	}
	const tail = Buffer.alloc(2);
	tail.writeInt16BE(-1, 0);
	parts.push(tail);
	return new Blob(parts);
}

/** bytea from base64 text: a third less to send than hex, and PostgreSQL decodes it fast. */
function asByteaSql(bytes: Uint8Array) {
	return sql<Uint8Array>`decode(${Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength).toString('base64')}, 'base64')`;
}

export async function storeSeries(tx: Tx, runId: string, series: CycleSeries): Promise<void> {
	const rows: SeriesRow[] = [
		{ runId, ordinal: 0, column: 'time', role: 'time', unit: 's', data: encode(series.t) },
		...series.channels.map((c, k) => ({ runId, ordinal: k + 1, column: c.id, role: c.role, unit: c.unit ?? '', data: encode(c.values) }))
	];
	const client = pgliteClient(tx);
	if (client) {
		await client.query(`copy cycle_series (run_id, ordinal, "column", role, unit, data) from '/dev/blob' with (format binary)`, [], { blob: encodeCopyRows(rows) });
	} else {
		for (const r of rows) await tx.insert(cycleSeries).values({ ...r, data: asByteaSql(r.data) });
	}
	await storeOverview(tx, runId, series);
}

/** The run's coarse overview (domain/lyo/overview.ts), stored beside its series. */
export async function storeOverview(tx: Tx, runId: string, series: CycleSeries): Promise<void> {
	const o = buildOverview(series);
	const rows = o.t.length;
	const all = new Float64Array(rows * (3 + o.values.length));
	[o.t, o.index, o.bucket, ...o.values].forEach((col, k) => all.set(col, k * rows));
	await tx.insert(cycleOverview).values({
		runId,
		buckets: o.buckets,
		rows,
		samples: o.samples,
		channels: series.channels.map((c) => ({ id: c.id, role: c.role, unit: c.unit })),
		data: asByteaSql(encode(all))
	});
}

export interface StoredOverview extends SeriesOverview {
	channels: { id: string; role: ChannelRole; unit: CanonicalUnit | null }[];
}

/** A run's overview, or null (no such run, or a run stored before overviews existed). */
export async function loadOverview(db: Executor, runId: string): Promise<StoredOverview | null> {
	const [row] = await db
		.select({ buckets: cycleOverview.buckets, rows: cycleOverview.rows, samples: cycleOverview.samples, channels: cycleOverview.channels, hex: sql<string>`encode(${cycleOverview.data}, 'hex')` })
		.from(cycleOverview)
		.where(eq(cycleOverview.runId, runId));
	if (!row) return null;
	const all = decode(Buffer.from(row.hex, 'hex'));
	const col = (k: number) => all.subarray(k * row.rows, (k + 1) * row.rows);
	const channels = row.channels as StoredOverview['channels'];
	return { buckets: row.buckets, samples: row.samples, t: col(0), index: col(1), bucket: col(2), values: channels.map((_, k) => col(3 + k)), channels };
}

/**
 * Samples [lo, hi) of a run (time axis and the given columns, all when none are given): with
 * STORAGE EXTERNAL, substring() reads only the TOAST chunks of that slice.
 */
export async function loadSeriesSlice(db: Executor, runId: string, lo: number, hi: number, columns?: readonly string[]): Promise<CycleSeries | null> {
	const where = columns
		? and(eq(cycleSeries.runId, runId), inArray(cycleSeries.column, ['time', ...columns]))
		: eq(cycleSeries.runId, runId);
	const from = lo * 8 + 1;
	const length = Math.max(0, hi - lo) * 8;
	const rows = await db
		.select({ ordinal: cycleSeries.ordinal, column: cycleSeries.column, role: cycleSeries.role, unit: cycleSeries.unit, hex: sql<string>`encode(substring(${cycleSeries.data} from ${from}::int for ${length}::int), 'hex')` })
		.from(cycleSeries)
		.where(where)
		.orderBy(asc(cycleSeries.ordinal));
	return toSeries(rows);
}

type HexRow = { ordinal: number; column: string; role: string; unit: string; hex: string };

function toSeries(rows: HexRow[]): CycleSeries | null {
	const time = rows.find((r) => r.ordinal === 0);
	if (!time) return null;
	const channels: SeriesChannel[] = rows
		.filter((r) => r.ordinal > 0)
		.map((r) => ({ id: r.column, role: r.role as ChannelRole, unit: (r.unit || null) as CanonicalUnit | null, values: decode(Buffer.from(r.hex, 'hex')) }));
	return { t: decode(Buffer.from(time.hex, 'hex')), channels };
}

/** The stored channels of a run (without their data). */
export async function listSeriesChannels(db: Executor, runId: string): Promise<{ ordinal: number; column: string; role: string; unit: string }[]> {
	return db
		.select({ ordinal: cycleSeries.ordinal, column: cycleSeries.column, role: cycleSeries.role, unit: cycleSeries.unit })
		.from(cycleSeries)
		.where(eq(cycleSeries.runId, runId))
		.orderBy(asc(cycleSeries.ordinal));
}

/** Loads a run's series; `columns` limits the channels loaded (the time axis always comes). */
export async function loadSeries(db: Executor, runId: string, columns?: readonly string[]): Promise<CycleSeries | null> {
	const where = columns
		? and(eq(cycleSeries.runId, runId), inArray(cycleSeries.column, ['time', ...columns]))
		: eq(cycleSeries.runId, runId);
	// Hex text, decoded here: far faster than the drivers' own bytea parsing (tables/cycles.ts).
	const rows = await db
		.select({ ordinal: cycleSeries.ordinal, column: cycleSeries.column, role: cycleSeries.role, unit: cycleSeries.unit, hex: sql<string>`encode(${cycleSeries.data}, 'hex')` })
		.from(cycleSeries)
		.where(where)
		.orderBy(asc(cycleSeries.ordinal));
	return toSeries(rows);
}

// Stored series never change, so decoded copies can be kept: a chart pans and zooms through
// many requests on one run. Bounded: about 25 MB per 72 h run at 1 s with 12 channels.
const CACHE_SIZE = 3;
const cache = new Map<string, CycleSeries>();

/** loadSeries for the whole run, through a small least-recently-used cache. */
export async function loadSeriesCached(db: Executor, runId: string): Promise<CycleSeries | null> {
	const hit = cache.get(runId);
	if (hit) {
		cache.delete(runId);
		cache.set(runId, hit);
		return hit;
	}
	const series = await loadSeries(db, runId);
	if (!series) return null;
	cache.set(runId, series);
	while (cache.size > CACHE_SIZE) cache.delete(cache.keys().next().value as string);
	return series;
}

/** A run's series when the cache holds it (no database read), else null. */
export function cachedSeries(runId: string): CycleSeries | null {
	return cache.get(runId) ?? null;
}

/** For tests and benchmarks: forget the cached series. */
export function clearSeriesCache(): void {
	cache.clear();
}
