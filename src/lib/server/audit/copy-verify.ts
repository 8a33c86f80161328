import { createHash } from 'node:crypto';
import { Worker } from 'node:worker_threads';
import { scanCopyBatch, type CopyScanResult, type CopyScanStart } from './copy-scan';

/**
 * The app engine's fast path on PGlite (issue 4, "Speed"): each batch leaves the database as one
 * binary COPY blob (no per-row parsing into JS values), and is checked by scanCopyBatch. For big
 * ledgers the hashing runs in a worker thread while PGlite (which runs on this thread) produces
 * the next batch, so reading and hashing overlap (double buffering, at most two batches in flight).
 *
 * It trusts nothing but the bytes read, like the app engine. It stops at the first batch that is
 * not entirely good and hands back where that batch starts; the caller classifies the break there
 * with the exact rules (chain.ts), reading that batch again the ordinary way.
 */
export interface PgliteCopyClient {
	query(text: string, params?: unknown[], options?: Record<string, unknown>): Promise<{ rows: unknown[]; blob?: Blob }>;
}

export interface CopyScan {
	/** Rows verified good, from start.seq + 1. */
	count: number;
	/** The last good row's seq and hash. */
	head: { seq: number; hash: string };
	/** True when every row after start was good; false: classify from `head` on. */
	complete: boolean;
}

export interface CopyScanOptions {
	batchSize: number;
	/** 'auto': a worker when at least two more batches are left. */
	worker: boolean | 'auto';
	onProgress?: (verified: number) => void;
}

// PostgreSQL does not take bind parameters in COPY, so the bounds are inlined after this check.
function copyBatchSql(after: number, limit: number): string {
	if (!Number.isSafeInteger(after) || !Number.isSafeInteger(limit) || limit < 1) throw new RangeError('The verifier needs integer batch bounds.');
	return `copy (select seq, prev_hash, hash, canonical from audit_event where seq > ${after} order by seq limit ${limit}) to '/dev/blob' with (format binary, encoding 'UTF8')`;
}

async function readBatch(client: PgliteCopyClient, after: number, limit: number): Promise<ArrayBuffer> {
	const result = await client.query(copyBatchSql(after, limit));
	if (!result.blob) throw new Error('PGlite returned no COPY output.');
	return result.blob.arrayBuffer();
}

export async function scanByCopy(client: PgliteCopyClient, start: { seq: number; hash: string }, options: CopyScanOptions): Promise<CopyScan> {
	const n = options.batchSize;
	let useWorker = options.worker === true;
	if (options.worker === 'auto') {
		const [row] = (await client.query('select max(seq) as last from audit_event', [], { rowMode: 'array' })).rows as [unknown][];
		useWorker = Number(row?.[0] ?? 0) - start.seq >= 2 * n;
	}
	const scanner = useWorker ? new WorkerScanner({ expected: start.seq + 1, lastHash: start.hash }) : null;
	try {
		let state: CopyScanStart = { expected: start.seq + 1, lastHash: start.hash };
		const inFlight: Promise<CopyScanResult & { start: CopyScanStart }>[] = [];
		// The next batch is read speculatively from the seq the previous one must end at: if that
		// batch turns out not to be all good, everything after it is thrown away anyway.
		let nextAfter = start.seq;
		for (;;) {
			if (!scanner || inFlight.length === 2) {
				const settled = scanner ? await inFlight.shift()! : null;
				if (settled) {
					if (!settled.ok) return stopAt(settled.start, start);
					state = { expected: settled.expected, lastHash: settled.lastHash };
					options.onProgress?.(state.expected - 1 - start.seq);
					if (settled.rows < n) return done(state, start);
				}
			}
			const buffer = await readBatch(client, nextAfter, n);
			if (scanner) {
				const scanned = scanner.scan(buffer);
				// Batches still in flight when an earlier one settles the scan are never awaited.
				scanned.catch(() => undefined);
				inFlight.push(scanned);
				nextAfter += n;
				continue;
			}
			const result = scanCopyBatch(new Uint8Array(buffer), state, createHash);
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

function done(state: CopyScanStart, start: { seq: number }): CopyScan {
	return { count: state.expected - 1 - start.seq, head: { seq: state.expected - 1, hash: state.lastHash }, complete: true };
}

function stopAt(state: CopyScanStart, start: { seq: number }): CopyScan {
	return { ...done(state, start), complete: false };
}

// The worker runs scanCopyBatch's own source text, so both threads apply the same code. It keeps
// the chain state between batches (they arrive in order) and, after a batch that is not all good,
// answers "not ok" for the rest.
const WORKER_SOURCE = `
const { parentPort } = require('node:worker_threads');
const { createHash } = require('node:crypto');
const scanCopyBatch = ${scanCopyBatch.toString()};
let state = null;
parentPort.on('message', (message) => {
	if (message.start) { state = message.start; return; }
	const start = state;
	if (!start) { parentPort.postMessage({ ok: false, rows: 0, expected: 0, lastHash: '', start: { expected: 0, lastHash: '' } }); return; }
	try {
		const result = scanCopyBatch(new Uint8Array(message.buffer), start, createHash);
		state = result.ok ? { expected: result.expected, lastHash: result.lastHash } : null;
		parentPort.postMessage({ ...result, start });
	} catch (error) {
		state = null;
		parentPort.postMessage({ ok: false, rows: 0, expected: 0, lastHash: '', start, error: String(error) });
	}
});`;

class WorkerScanner {
	private worker: Worker;
	private waiting: { resolve: (r: CopyScanResult & { start: CopyScanStart }) => void; reject: (e: unknown) => void }[] = [];
	constructor(start: CopyScanStart) {
		this.worker = new Worker(WORKER_SOURCE, { eval: true });
		this.worker.postMessage({ start });
		this.worker.on('message', (message: CopyScanResult & { start: CopyScanStart; error?: string }) => {
			const next = this.waiting.shift();
			if (message.error) next?.reject(new Error(message.error));
			else next?.resolve(message);
		});
		this.worker.on('error', (error) => {
			for (const w of this.waiting.splice(0)) w.reject(error);
		});
	}

	scan(buffer: ArrayBuffer): Promise<CopyScanResult & { start: CopyScanStart }> {
		return new Promise((resolve, reject) => {
			this.waiting.push({ resolve, reject });
			this.worker.postMessage({ buffer }, [buffer]);
		});
	}

	async close() {
		await this.worker.terminate();
	}
}
