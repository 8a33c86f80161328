import { createHash } from 'node:crypto';
import { Worker } from 'node:worker_threads';
import type { Executor } from '../db/client';
import { queryRows } from './rows';
import { scanTextBatch, type TextBatch, type TextScanResult, type TextScanStart } from './text-scan';

/**
 * The app engine's fast path (issue 4, "Speed"), on PGlite and on a PostgreSQL server alike: each
 * batch of events, in seq order from a keyset cursor, leaves the database as five values — the
 * row count and each column concatenated by string_agg (text-scan.ts) — instead of one JS value
 * per row, which is what a row-by-row read spends most of its time on. For big ledgers the hashing
 * runs in a worker thread while the database (PGlite runs on this thread) produces the next batch,
 * so reading and hashing overlap (double buffering, at most two batches in flight).
 *
 * It trusts nothing but the bytes read, like the row-by-row engine. It stops at the first batch
 * that is not entirely good and hands back where that batch starts; the caller classifies the break
 * there with the exact rules (chain.ts), reading that batch again row by row.
 */
export interface BatchScan {
	/** Rows verified good, from start.seq + 1. */
	count: number;
	/** The last good row's seq and hash. */
	head: { seq: number; hash: string };
	/** True when every row after start was good; false: classify from `head` on. */
	complete: boolean;
}

export interface BatchScanOptions {
	batchSize: number;
	/** 'auto': a worker when at least two more batches and WORKER_MIN_EVENTS events are left. */
	worker: boolean | 'auto';
	onProgress?: (verified: number) => void;
}

// The inner query walks the primary key from the cursor (keyset paging, no OFFSET); string_agg
// keeps the order of its sorted input, and the scan checks every seq anyway.
const SQL_BATCH = `select count(*)::int, string_agg(seq::text, ','), string_agg(prev_hash, ','), string_agg(hash, ','), string_agg(canonical, E'\\n')
	from (select seq, prev_hash, hash, canonical from audit_event where seq > $1 order by seq limit $2) as b`;

// Below this, starting a thread (tens of milliseconds) costs more than the overlap saves.
const WORKER_MIN_EVENTS = 100_000;

type BatchRow = [number | string, string | null, string | null, string | null, string | null];

async function readBatch(db: Executor, after: number, limit: number): Promise<TextBatch> {
	const [[rows, seqs, prevHashes, hashes, canonicals]] = await queryRows<BatchRow>(db, SQL_BATCH, [after, limit]);
	return { rows: Number(rows), seqs, prevHashes, hashes, canonicals };
}

export async function scanByBatches(db: Executor, start: { seq: number; hash: string }, options: BatchScanOptions): Promise<BatchScan> {
	const n = options.batchSize;
	let useWorker = options.worker === true;
	if (options.worker === 'auto') {
		const [[last]] = await queryRows<[number | string | null]>(db, 'select max(seq) from audit_event', []);
		useWorker = Number(last ?? 0) - start.seq >= Math.max(2 * n, WORKER_MIN_EVENTS);
	}
	const scanner = useWorker ? new WorkerScanner({ expected: start.seq + 1, lastHash: start.hash }) : null;
	try {
		let state: TextScanStart = { expected: start.seq + 1, lastHash: start.hash };
		const inFlight: Promise<TextScanResult & { start: TextScanStart }>[] = [];
		// The next batch is read speculatively from the seq the previous one must end at: if that
		// batch turns out not to be all good, everything after it is thrown away anyway.
		let nextAfter = start.seq;
		for (;;) {
			if (scanner && inFlight.length === 2) {
				const settled = await inFlight.shift()!;
				if (!settled.ok) return stopAt(settled.start, start);
				state = { expected: settled.expected, lastHash: settled.lastHash };
				options.onProgress?.(state.expected - 1 - start.seq);
				if (settled.rows < n) return done(state, start);
			}
			const batch = await readBatch(db, nextAfter, n);
			if (scanner) {
				const scanned = scanner.scan(batch);
				// Batches still in flight when an earlier one settles the scan are never awaited.
				scanned.catch(() => undefined);
				inFlight.push(scanned);
				nextAfter += n;
				continue;
			}
			const result = scanTextBatch(batch, state, createHash);
			if (!result.ok) return stopAt(state, start);
			state = { expected: result.expected, lastHash: result.lastHash };
			nextAfter = state.expected - 1;
			options.onProgress?.(nextAfter - start.seq);
			if (result.rows < n) return done(state, start);
		}
	} finally {
		await scanner?.close();
	}
}

function done(state: TextScanStart, start: { seq: number }): BatchScan {
	return { count: state.expected - 1 - start.seq, head: { seq: state.expected - 1, hash: state.lastHash }, complete: true };
}

function stopAt(state: TextScanStart, start: { seq: number }): BatchScan {
	return { ...done(state, start), complete: false };
}

// The worker runs scanTextBatch's own source text, so both threads apply the same code. It keeps
// the chain state between batches (they arrive in order) and, after a batch that is not all good,
// answers "not ok" for the rest.
const WORKER_SOURCE = `
const { parentPort } = require('node:worker_threads');
const { createHash } = require('node:crypto');
const scanTextBatch = ${scanTextBatch.toString()};
let state = null;
parentPort.on('message', (message) => {
	if (message.start) { state = message.start; return; }
	const start = state;
	if (!start) { parentPort.postMessage({ ok: false, rows: 0, expected: 0, lastHash: '', start: { expected: 0, lastHash: '' } }); return; }
	try {
		const result = scanTextBatch(message.batch, start, createHash);
		state = result.ok ? { expected: result.expected, lastHash: result.lastHash } : null;
		parentPort.postMessage({ ...result, start });
	} catch (error) {
		state = null;
		parentPort.postMessage({ ok: false, rows: 0, expected: 0, lastHash: '', start, error: String(error) });
	}
});`;

class WorkerScanner {
	private worker: Worker;
	private waiting: { resolve: (r: TextScanResult & { start: TextScanStart }) => void; reject: (e: unknown) => void }[] = [];
	constructor(start: TextScanStart) {
		this.worker = new Worker(WORKER_SOURCE, { eval: true });
		this.worker.postMessage({ start });
		this.worker.on('message', (message: TextScanResult & { start: TextScanStart; error?: string }) => {
			const next = this.waiting.shift();
			if (message.error) next?.reject(new Error(message.error));
			else next?.resolve(message);
		});
		this.worker.on('error', (error) => {
			for (const w of this.waiting.splice(0)) w.reject(error);
		});
	}

	scan(batch: TextBatch): Promise<TextScanResult & { start: TextScanStart }> {
		return new Promise((resolve, reject) => {
			this.waiting.push({ resolve, reject });
			this.worker.postMessage({ batch });
		});
	}

	async close() {
		await this.worker.terminate();
	}
}
