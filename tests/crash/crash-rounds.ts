import { PASSWORD, createStore, freePort, signIn, startServer, type Server } from './server';

/**
 * Crash safety (issue 9; 21 CFR 11.10(a), (e); Annex 11 §7.1 "data should be secured … against
 * damage"; §12.4 audit trail): clients write signed records concurrently — step entries signed
 * "performed" and batches issued with a signature — while the built server is SIGKILLed at a
 * random moment; after a restart on the same store every write the server acknowledged (a 2xx
 * received by the client) must be there and the whole audit chain must verify. Rounds continue
 * on the same store, so the chain crosses every crash.
 */
export interface CrashOptions {
	kind: 'pglite' | 'postgresql';
	rounds: number;
	/** Writing clients per round (half entries, half issues). */
	clients?: number;
	/** The kill comes at a random moment in [minMs, maxMs) after the round's first acknowledged write. */
	minMs?: number;
	maxMs?: number;
	log?: (line: string) => void;
}

export interface CrashSummary {
	rounds: number;
	acknowledged: number;
	missing: string[];
	chainFailures: string[];
	auditEvents: number;
	writeErrors: string[];
	unacknowledgedInFlight: number;
}

const STEP = 'weigh_sucrose';

interface Ack {
	kind: 'entry' | 'batch';
	id: string;
	round: number;
}

export async function runCrashRounds(o: CrashOptions): Promise<CrashSummary> {
	const log = o.log ?? (() => {});
	const clients = o.clients ?? 6;
	const store = await createStore(o.kind);
	const port = await freePort();
	const acks: Ack[] = [];
	const summary: CrashSummary = { rounds: 0, acknowledged: 0, missing: [], chainFailures: [], auditEvents: 0, writeErrors: [], unacknowledgedInFlight: 0 };
	let server: Server | null = null;
	// The demo batch whose weighing the seed recorded: corrections of it are the entry writes.
	let demoBatch: { id: string } | undefined;
	try {
		for (let round = 1; round <= o.rounds; round++) {
			server = await startServer(store, port);
			const base = server.base;
			if (round > 1) await checkAcknowledged(base, acks, summary, round - 1);
			const qa = await signIn(base, 'qa');
			const masters = (await (await fetch(`${base}/api/masters`, { headers: { cookie: qa } })).json()) as { id: string; status: string }[];
			const master = masters.find((m) => m.status === 'effective');
			demoBatch ??= await seededBatch(base, qa);
			if (!master || !demoBatch) throw new Error('the demo seed has no effective master or no batch with a weighing');
			const batchId = demoBatch.id;

			let stop = false;
			let inFlight = 0;
			const usernameOf = (i: number) => (i % 2 === 0 ? (i % 4 === 0 ? 'operator' : 'operator2') : 'qa');
			// Everyone signs in before the clock for the kill starts.
			const cookies = await Promise.all(Array.from({ length: clients }, (_, i) => signIn(base, usernameOf(i))));
			const writers = Array.from({ length: clients }, async (_, i) => {
				const entries = i % 2 === 0;
				const username = usernameOf(i);
				const cookie = cookies[i];
				let signed = false;
				let version: number | undefined;
				for (let attempt = 0; !stop; attempt++) {
					const signature = signed ? { password: PASSWORD } : { username, password: PASSWORD };
					const url = entries ? `${base}/api/batches/${batchId}/steps/${STEP}/entries` : `${base}/api/batches`;
					// 597.0–603.0 g is within the demo template's limits; every value is distinct enough to trace.
					const body = entries
						? { values: { sucrose_lot: 'SUC-40871', sucrose_balance: 'BAL-07', sucrose_weighed: (598 + ((i * 13 + attempt) % 40) / 10).toFixed(1) }, reasonCode: 'instrument-re-read', comment: `crash round ${round} client ${i} #${attempt}`, version, signature }
						: { masterRecordId: master.id, batchSize: 12, signature };
					inFlight += 1;
					let res: Response;
					try {
						res = await fetch(url, { method: 'POST', headers: { cookie, 'content-type': 'application/json', origin: base }, body: JSON.stringify(body) });
					} catch {
						// The server died under this request: it was never acknowledged.
						summary.unacknowledgedInFlight += 1;
						return;
					} finally {
						inFlight -= 1;
					}
					let answer: { entryId?: string; version?: number; batchId?: string; state?: { version: number }; message?: string };
					try {
						answer = await res.json();
					} catch {
						// Status line received, body cut by the kill: a 2xx here still counts as acknowledged if it carried an id — it cannot, so it does not.
						summary.unacknowledgedInFlight += 1;
						return;
					}
					if (res.status === 201) {
						signed = true;
						const id = entries ? answer.entryId : answer.batchId;
						if (!id) summary.writeErrors.push(`201 without an id: ${JSON.stringify(answer).slice(0, 200)}`);
						else acks.push({ kind: entries ? 'entry' : 'batch', id, round });
						if (entries) version = answer.version;
					} else if (res.status === 409 && answer.state) {
						version = answer.state.version;
					} else if (res.status === 409) {
						/* a conflicting batch number: try again */
					} else {
						summary.writeErrors.push(`${res.status} ${answer.message ?? ''}`.slice(0, 200));
						return;
					}
				}
			});
			// The kill falls at a random moment once the load is under way (the first write acknowledged), so every round has something to lose.
			const loadStart = Date.now();
			while (!acks.some((a) => a.round === round) && Date.now() - loadStart < 60_000 && summary.writeErrors.length === 0) await new Promise((r) => setTimeout(r, 20));
			const killAfter = (o.minMs ?? 0) + Math.random() * ((o.maxMs ?? 3000) - (o.minMs ?? 0));
			await new Promise((r) => setTimeout(r, killAfter));
			await server.kill();
			stop = true;
			await Promise.all(writers);
			log(`[crash ${o.kind}] round ${round}: killed ${killAfter.toFixed(0)} ms after the first acknowledged write; ${acks.filter((a) => a.round === round).length} writes acknowledged this round, ${inFlight} in flight`);
			summary.rounds = round;
		}
		server = await startServer(store, port);
		await checkAcknowledged(server.base, acks, summary, o.rounds);
		summary.acknowledged = acks.length;
	} finally {
		await server?.stop();
		await store.dispose();
	}
	return summary;
}

async function seededBatch(base: string, cookie: string): Promise<{ id: string } | undefined> {
	// The demo batch being executed (the other seeded batch awaits review).
	const batches = ((await (await fetch(`${base}/api/batches`, { headers: { cookie } })).json()) as { id: string; status: string }[]).filter((b) => b.status === 'in-progress');
	for (const b of batches) {
		const view = (await (await fetch(`${base}/api/batches/${b.id}`, { headers: { cookie } })).json()) as { sections: { steps: { key: string; history: unknown[] }[] }[] };
		if (view.sections.flatMap((x) => x.steps).some((s) => s.key === STEP && s.history.length > 0)) return b;
	}
	return undefined;
}

async function checkAcknowledged(base: string, acks: Ack[], summary: CrashSummary, round: number): Promise<void> {
	const inspector = await signIn(base, 'qa'); // QA reads batches and the audit trail
	const batches = (await (await fetch(`${base}/api/batches`, { headers: { cookie: inspector } })).json()) as { id: string }[];
	const batchIds = new Set(batches.map((b) => b.id));
	const entryIds = new Set<string>();
	for (const b of batches) {
		const view = (await (await fetch(`${base}/api/batches/${b.id}`, { headers: { cookie: inspector } })).json()) as { sections: { steps: { history: { id: string }[] }[] }[] };
		for (const s of view.sections.flatMap((x) => x.steps)) for (const e of s.history) entryIds.add(e.id);
	}
	for (const a of acks) if (!(a.kind === 'batch' ? batchIds : entryIds).has(a.id) && !summary.missing.includes(`${a.kind} ${a.id}`)) summary.missing.push(`${a.kind} ${a.id} (round ${a.round})`);
	// Both verifiers: the database's own recomputation and the app's (src/lib/server/audit/verify.ts).
	for (const engine of ['database', 'app']) {
		const verify = (await (await fetch(`${base}/api/audit/verify?engine=${engine}`, { headers: { cookie: inspector } })).json()) as { ok: boolean; count: number; firstBreak: unknown };
		if (!verify.ok) summary.chainFailures.push(`after round ${round} (${engine}): ${JSON.stringify(verify.firstBreak)}`);
		summary.auditEvents = verify.count;
	}
}
