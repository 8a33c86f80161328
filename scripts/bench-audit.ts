/**
 * `npm run bench:audit [-- --events=1000000 --budget=420]`: the ledger's speed on this machine
 * (issue 4, "Speed"). Prints each ratio with its goal, PASS or MISSED:
 *   - verify: verifyChain over N events read from a PGlite data folder (as the app opens it),
 *     against SHA-256 of the same prev_hash ‖ canonical bytes with node:crypto alone (goal ≤ 3×).
 *     Engines: app (binary COPY batches, hashed in a worker thread while the next batch is read),
 *     app without the worker, and database (PostgreSQL's sha256 per batch);
 *   - append: a unit of work inserting one row with its audit event, against the same insert in a
 *     plain transaction (goal ≤ 1.5×), as the median of interleaved rounds (the machine is shared).
 * Bounded in time: loading stops at the --budget seconds and the bench runs on what was loaded,
 * saying so. Synthetic, invented events only.
 */
import { createHash } from 'node:crypto';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { PGlite } from '@electric-sql/pglite';
import { openDatabase } from '../src/lib/server/db/client';
import { canonicalEvent, GENESIS_HASH, hashEvent } from '../src/lib/server/audit/ledger';
import { verifyChain } from '../src/lib/server/audit/verify';
import { runUnitOfWork } from '../src/lib/server/work';
import { setting } from '../src/lib/server/db/schema';

const arg = (name: string, fallback: number) => Number(process.argv.find((a) => a.startsWith(`--${name}=`))?.split('=')[1] ?? fallback);
const target = arg('events', 1_000_000);
const budgetMs = arg('budget', 420) * 1000;
const appends = arg('appends', 1500);

const dir = mkdtempSync(join(tmpdir(), 'rimebook-bench-'));
const handle = openDatabase({ dataDir: dir });
const started = performance.now();
const seconds = (ms: number) => `${(ms / 1000).toFixed(2)} s`;

try {
	await handle.connect();
	await handle.migrate('drizzle');
	const client = (handle.db as unknown as { $client: PGlite }).$client;

	// Load: the chain is built here exactly as appendEvent builds it, and bulk-copied in.
	const canonicals: string[] = [];
	const prevHashes: string[] = [];
	let prev = GENESIS_HASH;
	const t0 = Date.UTC(2026, 0, 5, 6, 0, 0);
	const chunk = 50_000;
	let loaded = 0;
	while (loaded < target && performance.now() - started < budgetMs) {
		let copy = '';
		const end = Math.min(target, loaded + chunk);
		for (let seq = loaded + 1; seq <= end; seq++) {
			const canonical = canonicalEvent({
				seq,
				at: new Date(t0 + seq * 1500).toISOString().replace('Z', '000Z'),
				actorId: `3f1c2b8e-7d1a-4c55-9b0e-${String(seq % 97).padStart(12, '0')}`,
				actorName: seq % 2 ? 'Maren Oakhurst' : 'Tomas Reyvik',
				action: seq % 3 ? 'entry.record' : 'step.sign',
				entityType: 'batch-entry',
				entityId: `entry-${seq}`,
				batchId: `batch-${Math.floor(seq / 5000)}`,
				before: seq % 4 ? null : { value: 4.5, unit: 'mL' },
				after: { value: (seq % 1000) / 10, unit: 'mL', field: 'fill-volume', withinLimits: true },
				reason: seq % 10 ? null : 'Correction: transcription error'
			});
			const hash = hashEvent(prev, canonical);
			canonicals.push(canonical);
			prevHashes.push(prev);
			copy += `${seq}\t${canonical.replace(/\\/g, '\\\\')}\t${prev}\t${hash}\n`;
			prev = hash;
		}
		await client.query(`copy audit_event (seq, canonical, prev_hash, hash) from '/dev/blob'`, [], { blob: new Blob([copy]) });
		loaded = end;
		process.stderr.write(`\rloaded ${loaded.toLocaleString('en')} events (${seconds(performance.now() - started)})`);
	}
	process.stderr.write('\n');
	await client.query('checkpoint');
	const bytes = canonicals.reduce((n, c) => n + 64 + Buffer.byteLength(c), 0);
	console.log(`events: ${loaded.toLocaleString('en')}${loaded < target ? ` (load budget reached; target was ${target.toLocaleString('en')})` : ''}, ${(bytes / 1e6).toFixed(0)} MB hashed per pass`);

	// Baseline: the same SHA-256 work with node:crypto alone, on bytes already in memory.
	let tb = performance.now();
	let h = GENESIS_HASH;
	for (let i = 0; i < canonicals.length; i++) h = createHash('sha256').update(prevHashes[i]).update(canonicals[i]).digest('hex');
	const baseline = performance.now() - tb;
	if (h !== prev) throw new Error('baseline chain mismatch');
	console.log(`baseline  node:crypto SHA-256 of the same bytes: ${seconds(baseline)}`);

	const verdict = (ratio: number, goal: number) => `ratio ${ratio.toFixed(2)}× (goal ≤ ${goal}×: ${ratio <= goal ? 'PASS' : 'MISSED'})`;
	const runs = [
		{ label: 'app (COPY + worker)', options: { engine: 'app' as const, batchSize: 100_000 } },
		{ label: 'app (COPY, 1 thread)', options: { engine: 'app' as const, batchSize: 100_000, worker: false } },
		{ label: 'database (sha256 SQL)', options: { engine: 'database' as const } }
	];
	for (const { label, options } of runs) {
		tb = performance.now();
		const report = await verifyChain(handle.db, options);
		const took = performance.now() - tb;
		if (!report.ok || report.count !== loaded) throw new Error(`verification failed: ${JSON.stringify(report)}`);
		console.log(`verify    ${label.padEnd(22)} ${seconds(took)}  ${verdict(took / baseline, 3)}`);
	}

	// Append overhead, measured after the load so the ledger is as large as above.
	const actor = { id: 'u-bench', name: 'Bench Writer' };
	const plain = async (i: number) => handle.db.transaction(async (tx) => void (await tx.insert(setting).values({ key: `bench.plain.${i}`, value: { i } })));
	const audited = async (i: number) =>
		runUnitOfWork(handle.db, actor, async (uow) => {
			await uow.tx.insert(setting).values({ key: `bench.audited.${i}`, value: { i } });
			await uow.audit({ action: 'setting.create', entityType: 'setting', entityId: `bench.audited.${i}`, after: { i } });
		});
	for (let i = 0; i < 100; i++) {
		await plain(-i - 1);
		await audited(-i - 1);
	}
	let plainMs = 0;
	let auditedMs = 0;
	const ratios: number[] = [];
	// Interleaved short rounds, so drift in the machine's speed (other work on the shared cores)
	// hits both sides alike; the median round ratio resists the rounds a neighbour disturbed.
	const rounds = 10;
	const perRound = Math.max(1, Math.floor(appends / rounds));
	for (let round = 0; round < rounds; round++) {
		tb = performance.now();
		for (let i = 0; i < perRound; i++) await plain(round * perRound + i);
		const p = performance.now() - tb;
		tb = performance.now();
		for (let i = 0; i < perRound; i++) await audited(round * perRound + i);
		const a = performance.now() - tb;
		plainMs += p;
		auditedMs += a;
		ratios.push(a / p);
	}
	ratios.sort((x, y) => x - y);
	const median = (ratios[(rounds - 1) >> 1] + ratios[rounds >> 1]) / 2;
	const n = perRound * rounds;
	console.log(`append    plain insert: ${((n / plainMs) * 1000).toFixed(0)}/s, with audit event: ${((n / auditedMs) * 1000).toFixed(0)}/s  (all rounds ${(auditedMs / plainMs).toFixed(2)}×)`);
	console.log(`append    median of ${rounds} rounds         ${verdict(median, 1.5)}`);
	console.log(`total bench time ${seconds(performance.now() - started)}`);
} finally {
	await handle.close();
	rmSync(dir, { recursive: true, force: true });
}
