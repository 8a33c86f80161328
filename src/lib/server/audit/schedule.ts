import type { Database } from '../db/client';
import { createCheckpoint, getLatestCheckpoint } from './checkpoint';
import { rowsOf } from './ledger';
import { sql } from 'drizzle-orm';

/**
 * Signs a checkpoint at intervals (design.md: "at intervals and at each batch release"): every
 * `everyEvents` new events, checked once a minute, and at least every `everyMinutes` when anything
 * was appended. Off the request path: a timer, unref'd so it never keeps the process alive.
 */
export interface ScheduleOptions {
	everyEvents?: number;
	everyMinutes?: number;
	checkSeconds?: number;
}

const running = new WeakMap<object, ReturnType<typeof setInterval>>();

export function ensureCheckpointSchedule(db: Database, options: ScheduleOptions = {}): void {
	if (running.has(db)) return;
	const everyEvents = options.everyEvents ?? 1000;
	const everyMs = (options.everyMinutes ?? 60) * 60_000;
	let busy = false;
	const tick = async () => {
		if (busy) return;
		busy = true;
		try {
			const latest = await getLatestCheckpoint(db);
			const [{ seq }] = rowsOf<{ seq: string | number | null }>(await db.execute(sql`select max(seq) as seq from audit_event`));
			const pending = Number(seq ?? 0) - (latest?.size ?? 0);
			const age = latest ? Date.now() - Date.parse(latest.at) : Infinity;
			if (pending >= everyEvents || (pending > 0 && age >= everyMs)) await createCheckpoint(db);
		} catch (err) {
			console.error('[audit] scheduled checkpoint failed:', err instanceof Error ? err.message : err);
		} finally {
			busy = false;
		}
	};
	const timer = setInterval(tick, (options.checkSeconds ?? 60) * 1000);
	timer.unref?.();
	running.set(db, timer);
	void tick();
}

/** Whether the schedule runs for this database (tests: loads and GETs must not start it). */
export function isCheckpointScheduleRunning(db: Database): boolean {
	return running.has(db);
}

export function stopCheckpointSchedule(db: Database): void {
	const timer = running.get(db);
	if (timer) clearInterval(timer);
	running.delete(db);
}
