import { sql } from 'drizzle-orm';
import type { Database, Tx } from '$lib/server/db/client';
import { runUnitOfWork } from '$lib/server/work';
import type { Actor } from '$lib/server/audit/ledger';
import { rowsOf } from '$lib/server/audit/ledger';

/** Invented test actor (no real person). */
export const testActor: Actor = { id: 'u-test-1', name: 'Vera Testwell' };

/** Appends n synthetic events in units of work of `perUnit` events each (invented data). */
export async function appendSynthetic(db: Database, n: number, perUnit = 10): Promise<void> {
	for (let done = 0; done < n; ) {
		const k = Math.min(perUnit, n - done);
		await runUnitOfWork(db, testActor, async (uow) => {
			for (let i = 0; i < k; i++) {
				const j = done + i;
				await uow.audit({
					action: j % 3 === 0 ? 'equipment.update' : 'material-lot.create',
					entityType: j % 3 === 0 ? 'equipment' : 'material-lot',
					entityId: `ent-${j % 7}`,
					batchId: j % 4 === 0 ? `batch-${j % 2}` : null,
					before: j % 3 === 0 ? { status: 'in-service', n: j, ratio: 0.5 } : null,
					after: { status: j % 2 ? 'released' : 'quarantine', n: j + 1, big: 1e21, small: 5e-7 },
					reason: j % 5 === 0 ? 'Invented reason for a synthetic event' : null
				});
			}
		});
		done += k;
	}
}

/** A seeded PRNG (mulberry32, common practice for reproducible test data). */
export function prng(seed: number): () => number {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = a;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

export async function one<T>(tx: Database | Tx, query: ReturnType<typeof sql>): Promise<T> {
	return rowsOf<T>(await tx.execute(query))[0];
}
