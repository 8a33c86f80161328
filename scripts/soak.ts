/**
 * `npm run soak [-- --minutes 10 --fc-runs 300 --crash-rounds 20 --clients 24 --skip hostile,crash,load]`
 *
 * The long versions of issue 9's safety tests, against the built app (run `npm run build` first):
 *  1. hostile input: tests/integration/hostile with FC_RUNS large (PGlite, and PostgreSQL when
 *     DATABASE_URL_TEST is set);
 *  2. crash safety: CRASH rounds of SIGKILL during signed writes, per database kind;
 *  3. a mixed load for --minutes: many clients reading, correcting a step (signed "performed")
 *     and issuing batches (signed), then every acknowledged write is looked up and the audit chain
 *     verified by both engines.
 * It prints what it held and exits non-zero if anything did not. Not part of CI (it is long).
 */
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { parseArgs } from 'node:util';
import { runCrashRounds } from '../tests/crash/crash-rounds';
import { PASSWORD, createStore, freePort, signIn, startServer } from '../tests/crash/server';

const { values } = parseArgs({
	options: {
		minutes: { type: 'string', default: '10' },
		'fc-runs': { type: 'string', default: '300' },
		'crash-rounds': { type: 'string', default: '20' },
		clients: { type: 'string', default: '24' },
		skip: { type: 'string', default: '' }
	}
});
const minutes = Number(values.minutes);
const fcRuns = Number(values['fc-runs']);
const crashRounds = Number(values['crash-rounds']);
const clientCount = Number(values.clients);
const skip = new Set(values.skip.split(',').filter(Boolean));
const kinds: ('pglite' | 'postgresql')[] = process.env.DATABASE_URL_TEST ? ['pglite', 'postgresql'] : ['pglite'];
const held: string[] = [];
let failed = false;

function report(ok: boolean, line: string) {
	held.push(`${ok ? 'HELD ' : 'FAILED'} ${line}`);
	if (!ok) failed = true;
	console.log(`[soak] ${ok ? 'held' : 'FAILED'}: ${line}`);
}

function percentile(sorted: number[], p: number): number {
	return sorted.length ? sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)] : NaN;
}

async function mixedLoad(kind: 'pglite' | 'postgresql') {
	const store = await createStore(kind);
	const server = await startServer(store, await freePort());
	const base = server.base;
	const latencies: Record<string, number[]> = { read: [], entry: [], issue: [] };
	const statuses = new Map<number, number>();
	const errors: string[] = [];
	const acked: { kind: 'entry' | 'batch'; id: string }[] = [];
	try {
		const qa = await signIn(base, 'qa');
		const masters = (await (await fetch(`${base}/api/masters`, { headers: { cookie: qa } })).json()) as { id: string; status: string }[];
		const master = masters.find((m) => m.status === 'effective');
		// The demo batch being executed (the other seeded batch awaits review).
		const batches = ((await (await fetch(`${base}/api/batches`, { headers: { cookie: qa } })).json()) as { id: string; status: string }[]).filter((b) => b.status === 'in-progress');
		let batchId: string | undefined;
		for (const b of batches) {
			const view = (await (await fetch(`${base}/api/batches/${b.id}`, { headers: { cookie: qa } })).json()) as { sections: { steps: { key: string; history: unknown[] }[] }[] };
			if (view.sections.flatMap((s) => s.steps).some((s) => s.key === 'weigh_sucrose' && s.history.length)) batchId = b.id;
		}
		if (!master || !batchId) throw new Error('the demo seed has no effective master or no weighed batch');
		const roles = (i: number) => (i % 6 === 0 ? 'qa' : i % 3 === 0 ? 'operator2' : i % 2 === 0 ? 'operator' : 'inspector');
		const cookies = await Promise.all(Array.from({ length: clientCount }, (_, i) => signIn(base, roles(i))));
		const deadline = Date.now() + minutes * 60_000;
		const timed = async (what: string, call: () => Promise<Response>) => {
			const t = performance.now();
			const res = await call();
			latencies[what].push(performance.now() - t);
			statuses.set(res.status, (statuses.get(res.status) ?? 0) + 1);
			return res;
		};
		await Promise.all(
			cookies.map(async (cookie, i) => {
				const who = roles(i);
				let signed = false;
				let version: number | undefined;
				for (let n = 0; Date.now() < deadline; n++) {
					const signature = signed ? { password: PASSWORD } : { username: who, password: PASSWORD };
					const headers = { cookie, 'content-type': 'application/json', origin: base };
					if (who === 'inspector' || n % 3 !== 0) {
						// Each role reads what it may (the audit trail: QA and the inspector), so every answer should be a 200.
						const paths = who === 'qa' || who === 'inspector' ? [`/api/batches`, `/api/batches/${batchId}`, `/api/audit`] : [`/api/batches`, `/api/batches/${batchId}`];
						const path = paths[n % paths.length];
						const res = await timed('read', () => fetch(base + path, { headers: { cookie } }));
						await res.arrayBuffer();
						if (res.status !== 200) errors.push(`${res.status} GET ${path} as ${who}`);
					} else if (who === 'qa') {
						const res = await timed('issue', () => fetch(`${base}/api/batches`, { method: 'POST', headers, body: JSON.stringify({ masterRecordId: master.id, batchSize: 12, signature }) }));
						const body = (await res.json()) as { batchId?: string; message?: string };
						if (res.status === 201 && body.batchId) {
							signed = true;
							acked.push({ kind: 'batch', id: body.batchId });
						} else if (res.status !== 409) errors.push(`${res.status} issue: ${body.message}`);
					} else {
						const value = (598 + ((i * 7 + n) % 40) / 10).toFixed(1);
						const res = await timed('entry', () => fetch(`${base}/api/batches/${batchId}/steps/weigh_sucrose/entries`, { method: 'POST', headers, body: JSON.stringify({ values: { sucrose_lot: 'SUC-40871', sucrose_balance: 'BAL-07', sucrose_weighed: value }, reasonCode: 'instrument-re-read', comment: `soak ${i}/${n}`, version, signature }) }));
						const body = (await res.json()) as { entryId?: string; version?: number; state?: { version: number }; message?: string };
						if (res.status === 201 && body.entryId) {
							signed = true;
							version = body.version;
							acked.push({ kind: 'entry', id: body.entryId });
						} else if (res.status === 409 && body.state) version = body.state.version;
						else errors.push(`${res.status} entry: ${body.message}`);
					}
				}
			})
		);
		// Everything acknowledged is there, and the chain verifies.
		const after = (await (await fetch(`${base}/api/batches`, { headers: { cookie: qa } })).json()) as { id: string }[];
		const view = (await (await fetch(`${base}/api/batches/${batchId}`, { headers: { cookie: qa } })).json()) as { sections: { steps: { history: { id: string }[] }[] }[] };
		const entryIds = new Set(view.sections.flatMap((s) => s.steps).flatMap((s) => s.history.map((e) => e.id)));
		const batchIds = new Set(after.map((b) => b.id));
		const missing = acked.filter((a) => !(a.kind === 'entry' ? entryIds : batchIds).has(a.id));
		const chain = await Promise.all(['database', 'app'].map(async (engine) => (await (await fetch(`${base}/api/audit/verify?engine=${engine}`, { headers: { cookie: qa } })).json()) as { ok: boolean; count: number }));
		const all = Object.values(latencies).flat().sort((a, b) => a - b);
		const line = (what: string) => {
			const s = [...latencies[what]].sort((a, b) => a - b);
			return `${what} ${s.length} (p50 ${percentile(s, 50).toFixed(0)} ms, p95 ${percentile(s, 95).toFixed(0)} ms)`;
		};
		console.log(`[soak load ${kind}] ${minutes} min, ${clientCount} clients: ${all.length} requests — ${line('read')}, ${line('entry')}, ${line('issue')}; all p50 ${percentile(all, 50).toFixed(0)} ms, p95 ${percentile(all, 95).toFixed(0)} ms`);
		console.log(`[soak load ${kind}] statuses ${JSON.stringify(Object.fromEntries(statuses))}; audit events ${chain[0].count}`);
		report(errors.length === 0, `load ${kind}: ${all.length} requests, ${errors.length} errors${errors.length ? ` (first: ${errors[0]})` : ''}`);
		report(missing.length === 0 && acked.length > 0, `load ${kind}: ${acked.length} acknowledged signed writes, ${missing.length} missing`);
		report(chain.every((c) => c.ok), `load ${kind}: audit chain verified by the database and the app (${chain[0].count} events)`);
	} finally {
		await server.stop();
		await store.dispose();
	}
}

async function main() {
	if (!existsSync('build/index.js')) throw new Error('No build/ here: run `npm run build` first.');
	if (!skip.has('hostile')) {
		const r = spawnSync('npx', ['vitest', 'run', '--project', 'integration', 'tests/integration/hostile'], { stdio: 'inherit', env: { ...process.env, FC_RUNS: String(fcRuns) } });
		report(r.status === 0, `hostile input: FC_RUNS=${fcRuns} per handler on ${kinds.join(' and ')}`);
	}
	if (!skip.has('crash')) {
		for (const kind of kinds) {
			const s = await runCrashRounds({ kind, rounds: crashRounds, log: (l) => console.log(l) });
			const ok = s.missing.length === 0 && s.chainFailures.length === 0 && s.writeErrors.length === 0 && s.rounds === crashRounds;
			report(ok, `crash ${kind}: ${s.rounds} SIGKILL rounds, ${s.acknowledged} acknowledged writes, ${s.missing.length} missing, chain ${s.chainFailures.length ? 'BROKEN ' + s.chainFailures[0] : 'verified'} (${s.auditEvents} events)${s.writeErrors.length ? `, write errors: ${s.writeErrors[0]}` : ''}`);
		}
	}
	if (!skip.has('load')) for (const kind of kinds) await mixedLoad(kind);
	console.log(`\nsoak summary\n${held.map((l) => `  ${l}`).join('\n')}`);
	process.exitCode = failed ? 1 : 0;
}

main().catch((err) => {
	console.error(err);
	process.exit(1);
});
