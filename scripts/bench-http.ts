/**
 * Load benchmark of batch execution over HTTP (issue 6): a built server on a free loopback port
 * with a temporary data folder and the demo seed; 20 clients, each signed in with its own
 * session, correct the same step of the demo batch through POST /api/batches/<id>/steps/<step>/entries
 * with the batch version they last saw. A 409 (stale version) hands back the fresh state and the
 * client tries again. Prints p50/p95 latency and proves no lost update: every 201 is exactly one
 * entry in the step's single chain of corrections, and the batch version moved once per write.
 * Bounded: WRITES_PER_CLIENT successful writes per client, and a deadline.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

const CLIENTS = 20;
const WRITES_PER_CLIENT = Number(process.env.BENCH_WRITES ?? 2);
const DEADLINE_MS = Number(process.env.BENCH_DEADLINE_MS ?? 120_000);
const PASSWORD = 'frost-demo-2026';
const STEP = 'weigh_sucrose';

async function freePort(): Promise<number> {
	return new Promise((resolve, reject) => {
		const s = createServer();
		s.listen(0, '127.0.0.1', () => {
			const port = (s.address() as { port: number }).port;
			s.close(() => resolve(port));
		});
		s.on('error', reject);
	});
}

function percentile(sorted: number[], p: number): number {
	if (sorted.length === 0) return NaN;
	return sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)];
}

async function main() {
	const port = await freePort();
	const base = `http://127.0.0.1:${port}`;
	const dataDir = mkdtempSync(join(tmpdir(), 'rimebook-bench-http-'));
	const server = spawn(process.execPath, ['build'], {
		env: { ...process.env, PORT: String(port), HOST: '127.0.0.1', ORIGIN: base, RIMEBOOK_DATA_DIR: dataDir, RIMEBOOK_SEED: 'demo', RIMEBOOK_DEMO_PASSWORD: PASSWORD, BODY_SIZE_LIMIT: '128M' },
		stdio: ['ignore', 'ignore', 'inherit']
	});
	const exited = new Promise((r) => server.once('exit', r));
	const stop = async () => {
		server.kill('SIGTERM');
		// The data folder goes only after the server has closed its database.
		await Promise.race([exited, new Promise((r) => setTimeout(r, 10_000))]);
		rmSync(dataDir, { recursive: true, force: true });
	};
	try {
		const started = Date.now();
		for (;;) {
			if (Date.now() - started > 60_000) throw new Error('the server did not start within 60 s (run npm run build first)');
			try {
				if ((await fetch(`${base}/api/health`)).ok) break;
			} catch {
				/* not yet */
			}
			await new Promise((r) => setTimeout(r, 250));
		}
		async function signIn(username: string): Promise<string> {
			const res = await fetch(`${base}/login`, { method: 'POST', body: new URLSearchParams({ username, password: PASSWORD }), headers: { origin: base, accept: 'text/html' }, redirect: 'manual' });
			const cookie = res.headers.get('set-cookie')?.split(';')[0];
			if (!cookie) throw new Error(`${username} could not sign in (${res.status})`);
			return cookie;
		}
		const cookies = await Promise.all(Array.from({ length: CLIENTS }, (_, i) => signIn(i % 2 === 0 ? 'operator' : 'operator2')));
		const batches = (await (await fetch(`${base}/api/batches`, { headers: { cookie: cookies[0] } })).json()) as { id: string; version: number; status: string }[];
		// The demo batch being executed (the other seeded batch is complete and awaits review).
		const batchId = batches.find((b) => b.status === 'in-progress')!.id;
		const read = async (cookie: string) => (await (await fetch(`${base}/api/batches/${batchId}`, { headers: { cookie } })).json()) as { version: number; sections: { steps: { key: string; history: { id: string; supersedes: string | null }[] }[] }[] };
		const before = await read(cookies[0]);
		const historyBefore = before.sections.flatMap((s) => s.steps).find((s) => s.key === STEP)!.history.length;

		const latencies: number[] = [];
		const created: string[] = [];
		let conflicts = 0;
		const firstSignature = new Set<number>();
		const deadline = Date.now() + DEADLINE_MS;
		const t0 = Date.now();
		await Promise.all(
			cookies.map(async (cookie, i) => {
				let version = (await read(cookie)).version;
				let written = 0;
				let attempt = 0;
				while (written < WRITES_PER_CLIENT && Date.now() < deadline) {
					attempt += 1;
					// 597.0–603.0 g is within limits; each client writes its own values.
					const value = (598 + ((i * 7 + attempt) % 40) / 10).toFixed(1);
					const signature = firstSignature.has(i) ? { password: PASSWORD } : { username: i % 2 === 0 ? 'operator' : 'operator2', password: PASSWORD };
					const start = performance.now();
					const res = await fetch(`${base}/api/batches/${batchId}/steps/${STEP}/entries`, {
						method: 'POST',
						headers: { cookie, 'content-type': 'application/json', origin: base },
						body: JSON.stringify({ values: { sucrose_lot: 'SUC-40871', sucrose_balance: 'BAL-07', sucrose_weighed: value }, reasonCode: 'instrument-re-read', comment: `bench client ${i}`, version, signature })
					});
					latencies.push(performance.now() - start);
					const body = (await res.json()) as { entryId?: string; version?: number; state?: { version: number }; message?: string };
					if (res.status === 201) {
						firstSignature.add(i);
						created.push(body.entryId!);
						version = body.version!;
						written += 1;
					} else if (res.status === 409 && body.state) {
						conflicts += 1;
						version = body.state.version;
					} else throw new Error(`client ${i}: ${res.status} ${body.message}`);
				}
			})
		);
		const elapsed = Date.now() - t0;
		const after = await read(cookies[0]);
		const history = after.sections.flatMap((s) => s.steps).find((s) => s.key === STEP)!.history;
		const ids = new Set(history.map((e) => e.id));
		const lost = created.filter((id) => !ids.has(id));
		const linear = history.every((e, k) => (k === 0 ? e.supersedes === null : e.supersedes === history[k - 1].id));
		const sorted = [...latencies].sort((a, b) => a - b);
		console.log(`bench:http — ${CLIENTS} clients, loopback, PGlite, argon2id signature per request`);
		console.log(`requests ${latencies.length} (201: ${created.length}, 409 stale → retried: ${conflicts}) in ${(elapsed / 1000).toFixed(1)} s`);
		console.log(`latency p50 ${percentile(sorted, 50).toFixed(0)} ms, p95 ${percentile(sorted, 95).toFixed(0)} ms, max ${sorted.at(-1)?.toFixed(0)} ms`);
		console.log(`writes/s ${(created.length / (elapsed / 1000)).toFixed(1)}`);
		const ok = lost.length === 0 && history.length === historyBefore + created.length && after.version === before.version + created.length && linear;
		console.log(`no lost update: ${ok ? 'yes' : 'NO'} — history ${historyBefore} → ${history.length} (+${created.length}), version ${before.version} → ${after.version}, single chain: ${linear}, missing: ${lost.length}`);
		if (!ok) process.exitCode = 1;
		if (created.length < CLIENTS * WRITES_PER_CLIENT) console.log(`deadline reached before all writes (${created.length}/${CLIENTS * WRITES_PER_CLIENT})`);
	} finally {
		await stop();
	}
}

main().catch((err) => {
	console.error(err);
	process.exit(1);
});
