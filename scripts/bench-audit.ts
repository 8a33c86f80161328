/**
 * `npm run bench:audit [-- --events=1000000 --budget=420 --runs=3 --appends=1500]`: the ledger's
 * speed on this machine (issue 4, "Speed"). Prints each ratio with its goal, "met" or "MISSED":
 *   - verify: verifyChain over N events read from a PGlite data folder (as the app opens it),
 *     against SHA-256 of the same prev_hash ‖ canonical bytes with node:crypto alone (goal ≤ 3×).
 *     Engines: app (batches read as string_agg columns, hashed in a worker thread while the next
 *     batch is read), app without the worker, and database (PostgreSQL's sha256 per batch). After
 *     loading, the folder is brought to the state the running app keeps it in: its upkeep
 *     (db/upkeep.ts, VACUUM (ANALYZE): PGlite has no autovacuum) and a signed checkpoint, as the
 *     schedules do within their intervals. It is closed and opened again, so the first run starts
 *     with PGlite's buffer cache empty ("first after open", the OS file cache is warm); then --runs
 *     warm runs, each timed against a baseline pass measured just before it, and the median ratio
 *     is the verdict;
 *   - the inspector's trail filters at that size (no goal: times printed);
 *   - append: a unit of work inserting one row with its audit event, against the same insert in a
 *     plain transaction (goal ≤ 1.5×): the two alternate one at a time and the verdict is the ratio
 *     of the median times (the machine is shared; a neighbour's burst hits a few operations of
 *     either kind, which the median ignores). The process's CPU time per operation is printed too.
 *     With DATABASE_URL_BENCH set (a scratch PostgreSQL database: the bench migrates it and writes
 *     bench.* settings and audit events into it) the same is measured against that server too.
 * Bounded in time: loading stops at the --budget seconds and the bench runs on what was loaded,
 * saying so. `--keep=DIR` loads into DIR and leaves it; `--reuse=DIR` skips loading and measures the
 * events of such a folder (the baseline then hashes the bytes read back from it, untimed).
 * Synthetic, invented events only.
 */
import { createHash } from 'node:crypto';
import { mkdtempSync, rmSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import type { PGlite } from '@electric-sql/pglite';
import { openDatabase, type Database } from '../src/lib/server/db/client';
import { runUpkeep } from '../src/lib/server/db/upkeep';
import { createCheckpoint, ensureSigningKey } from '../src/lib/server/audit/checkpoint';
import { listTrail } from '../src/lib/server/audit/trail';
import { canonicalEvent, GENESIS_HASH, hashEvent } from '../src/lib/server/audit/ledger';
import { verifyChain } from '../src/lib/server/audit/verify';
import { runUnitOfWork } from '../src/lib/server/work';
import { setting } from '../src/lib/server/db/schema';

const arg = (name: string, fallback: number) => Number(process.argv.find((a) => a.startsWith(`--${name}=`))?.split('=')[1] ?? fallback);
const target = arg('events', 1_000_000);
const budgetMs = arg('budget', 420) * 1000;
const appends = arg('appends', 1500);
const runs = Math.max(1, arg('runs', 3));

const option = (name: string) => process.argv.find((a) => a.startsWith(`--${name}=`))?.slice(name.length + 3);
const reuse = option('reuse');
const keep = option('keep');
const dir = reuse ?? keep ?? mkdtempSync(join(tmpdir(), 'rimebook-bench-'));
let handle = openDatabase({ dataDir: dir });
const started = performance.now();
const seconds = (ms: number) => `${(ms / 1000).toFixed(2)} s`;
const median = (values: number[]) => {
	const v = [...values].sort((x, y) => x - y);
	return (v[(v.length - 1) >> 1] + v[v.length >> 1]) / 2;
};
const load = () => loadavg().map((l) => l.toFixed(2)).join(' ');
console.log(`machine load average (1, 5, 15 min) at start: ${load()}`);

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
	// The site key exists first, as in the app (its creation is the ledger's first event here); the
	// checkpoint below is signed with it.
	await ensureSigningKey(handle.db);
	{
		// The events already there (a folder loaded before, or the key's creation), read back (not
		// timed) for the baseline.
		for (;;) {
			const result = await client.query<[string | null, string | null]>(
				`select string_agg(prev_hash, ','), string_agg(canonical, E'\\n') from (select seq, prev_hash, hash, canonical from audit_event where seq > ${loaded} order by seq limit ${chunk}) as b`,
				[],
				{ rowMode: 'array' }
			);
			const [p, c] = result.rows[0];
			if (p === null || c === null) break;
			for (const h of p.split(',')) prevHashes.push(h);
			for (const text of c.split('\n')) canonicals.push(text);
			loaded = canonicals.length;
		}
		prev = loaded === 0 ? GENESIS_HASH : ((await client.query<[string]>('select hash from audit_event where seq = $1', [loaded], { rowMode: 'array' })).rows[0][0]);
		if (reuse) console.log(`reusing ${dir}: ${loaded.toLocaleString('en')} events read back`);
	}
	while (!reuse && loaded < target && performance.now() - started < budgetMs) {
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

	// Close and open the folder again, as the app starts: PGlite's buffer cache is empty.
	const reopen = async () => {
		await handle.close();
		handle = openDatabase({ dataDir: dir });
		await handle.connect();
	};
	await reopen();

	// Baseline: the same SHA-256 work with node:crypto alone, on bytes already in memory.
	const hashBaseline = () => {
		const tb = performance.now();
		let h = GENESIS_HASH;
		for (let i = 0; i < canonicals.length; i++) h = createHash('sha256').update(prevHashes[i]).update(canonicals[i]).digest('hex');
		if (h !== prev) throw new Error('baseline chain mismatch');
		return performance.now() - tb;
	};
	const verdict = (ratio: number, goal: number) => `ratio ${ratio.toFixed(2)}× (goal ≤ ${goal}×: ${ratio <= goal ? 'met' : 'MISSED'})`;
	const engines = [
		{ label: 'app (batches + worker)', options: { engine: 'app' as const } },
		{ label: 'app (batches, 1 thread)', options: { engine: 'app' as const, worker: false } },
		{ label: 'database (sha256 SQL)', options: { engine: 'database' as const } }
	];
	const timeVerify = async (options: (typeof engines)[number]['options']) => {
		const tb = performance.now();
		const report = await verifyChain(handle.db, options);
		const took = performance.now() - tb;
		if (!report.ok || report.count !== loaded) throw new Error(`verification failed: ${JSON.stringify(report)}`);
		return took;
	};
	const firstBaseline = hashBaseline();
	console.log(`baseline  node:crypto SHA-256 of the same bytes: ${seconds(firstBaseline)}`);
	// What the running app does within its schedules' intervals: upkeep, then a signed checkpoint.
	// The upkeep's VACUUM is the first reader of the copied rows, so its time includes setting every
	// hint bit (and, with data checksums, logging each page): a cost of the bulk load that a first
	// verification would otherwise carry.
	const upkept = await runUpkeep(handle.db);
	console.log(`upkeep    VACUUM (ANALYZE) of ${upkept.tables.length} due tables (${upkept.tables.slice(0, 3).join(', ')}${upkept.tables.length > 3 ? ', …' : ''}): ${seconds(upkept.ms)}`);
	const tc = performance.now();
	const checkpoint = await createCheckpoint(handle.db);
	console.log(`checkpoint signed at size ${checkpoint?.size.toLocaleString('en') ?? 'none'}: ${seconds(performance.now() - tc)}`);
	// The first verification after opening (cold PGlite cache), with the app engine.
	await reopen();
	const first = await timeVerify(engines[0].options);
	console.log(`verify    ${engines[0].label.padEnd(24)} first after open ${seconds(first)}  ${verdict(first / firstBaseline, 3)}`);
	for (const { label, options } of engines) {
		const ratios: number[] = [];
		const times: number[] = [];
		const baselines: number[] = [];
		for (let r = 0; r < runs; r++) {
			const base = hashBaseline();
			const took = await timeVerify(options);
			baselines.push(base);
			times.push(took);
			ratios.push(took / base);
		}
		console.log(
			`verify    ${label.padEnd(24)} warm, median of ${runs}: ${seconds(median(times))} against ${seconds(median(baselines))}  ${verdict(median(ratios), 3)}  (runs ${ratios.map((x) => x.toFixed(2) + '×').join(', ')})`
		);
	}

	// The inspector's filters at this size (design.md; issue 4 "find, filter"): one page of 50 each.
	const trailFilters = [
		{},
		{ batch: 'batch-100' },
		{ actor: 'Oakhurst' },
		{ action: 'step.sign' },
		{ entity: 'batch-entry:entry-500000' },
		{ from: '2026-01-10', to: '2026-01-10' },
		{ q: 'transcription' },
		{ q: 'no-such-text' }
	];
	const trailTimes: string[] = [];
	for (const filter of trailFilters) {
		const tt = performance.now();
		await listTrail(handle.db, filter, { limit: 50 }, 'UTC');
		trailTimes.push(`${Object.entries(filter).map(([k, v]) => `${k}=${v}`).join('&') || '(none)'} ${Math.round(performance.now() - tt)} ms`);
	}
	console.log(`trail     one page of 50, by filter: ${trailTimes.join('; ')}`);

	// Append overhead, measured after the load so the ledger is as large as above.
	await measureAppend(handle.db, 'PGlite');
	const serverUrl = process.env.DATABASE_URL_BENCH;
	if (serverUrl) {
		const server = openDatabase({ dataDir: '', databaseUrl: serverUrl });
		try {
			await server.connect();
			await server.migrate('drizzle');
			await measureAppend(server.db, 'PostgreSQL server (DATABASE_URL_BENCH)');
		} finally {
			await server.close();
		}
	}
	console.log(`machine load average (1, 5, 15 min) at end: ${load()}`);
	console.log(`total bench time ${seconds(performance.now() - started)}`);
} finally {
	await handle.close();
	if (!reuse && !keep) rmSync(dir, { recursive: true, force: true });
}

/** A unit of work inserting one row with its audit event against the same insert in a plain transaction. */
async function measureAppend(db: Database, where: string) {
	const actor = { id: 'u-bench', name: 'Bench Writer' };
	const run = Date.now().toString(36);
	const plain = async (i: number) => db.transaction(async (tx) => void (await tx.insert(setting).values({ key: `bench.${run}.plain.${i}`, value: { i } })));
	const audited = async (i: number) =>
		runUnitOfWork(db, actor, async (uow) => {
			await uow.tx.insert(setting).values({ key: `bench.${run}.audited.${i}`, value: { i } });
			await uow.audit({ action: 'setting.create', entityType: 'setting', entityId: `bench.${run}.audited.${i}`, after: { i } });
		});
	for (let i = 0; i < 100; i++) {
		await plain(-i - 1);
		await audited(-i - 1);
	}
	// One plain and one audited operation alternate, each timed alone (wall clock and this
	// process's CPU time; PGlite runs in-process, a server's own CPU is not counted).
	const plainTimes: number[] = [];
	const auditedTimes: number[] = [];
	const plainCpu: number[] = [];
	const auditedCpu: number[] = [];
	const timeOne = async (op: () => Promise<unknown>, wall: number[], cpu: number[]) => {
		const c0 = process.cpuUsage();
		const t0 = performance.now();
		await op();
		wall.push(performance.now() - t0);
		const c = process.cpuUsage(c0);
		cpu.push((c.user + c.system) / 1000);
	};
	for (let i = 0; i < appends; i++) {
		await timeOne(() => plain(i), plainTimes, plainCpu);
		await timeOne(() => audited(i), auditedTimes, auditedCpu);
	}
	const ms = (x: number) => `${(x * 1000).toFixed(0)} µs`;
	const sum = (v: number[]) => v.reduce((a, b) => a + b, 0);
	const ratio = median(auditedTimes) / median(plainTimes);
	console.log(`append    ${where}: ${appends} each, alternating; median plain insert ${ms(median(plainTimes))}, with audit event ${ms(median(auditedTimes))} (${(1000 / median(plainTimes)) | 0}/s against ${(1000 / median(auditedTimes)) | 0}/s)`);
	console.log(`append    ${where}: CPU time per operation (median): plain ${ms(median(plainCpu))}, audited ${ms(median(auditedCpu))}: ${(median(auditedCpu) / median(plainCpu)).toFixed(2)}×; all operations, wall: ${(sum(auditedTimes) / sum(plainTimes)).toFixed(2)}×`);
	console.log(`append    ${where}: median times   ratio ${ratio.toFixed(2)}× (goal ≤ 1.5×: ${ratio <= 1.5 ? 'met' : 'MISSED'})`);
}
