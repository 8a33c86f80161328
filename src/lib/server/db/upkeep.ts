import { sql } from 'drizzle-orm';
import type { Database, DatabaseHandle, Executor } from './client';
import { pgliteClientOf, queryRows } from '../audit/rows';

/**
 * Database upkeep for the embedded engine. A PostgreSQL server runs autovacuum, which keeps the
 * planner's statistics fresh (ANALYZE) and marks pages all-visible with their hint bits set
 * (VACUUM). PGlite is one process with no background workers, so it runs neither: its tables would
 * never be analysed, the trail's filters would be planned on default guesses (a date filter over
 * 1,000,000 events took 2.2 s unanalysed, 0.4 s analysed), and the first reader of every page
 * written by a bulk load (a restore) would pay for setting its hint bits. This module does that
 * work itself, table by table, when a table has grown as much as autovacuum would wait for.
 * Housekeeping only: no GMP data changes, so nothing is audited.
 */

/** What the catalogue says of one table: its size now and as of its last VACUUM or ANALYZE. */
export interface TableSize {
	table: string;
	/** Pages the table has now (pg_relation_size / block size). */
	pages: number;
	/** pg_class.relpages: pages at the last VACUUM or ANALYZE (0 if never). */
	relpages: number;
	/** pg_class.reltuples: rows at the last VACUUM or ANALYZE (-1 if never, PostgreSQL 14 and later). */
	reltuples: number;
}

// autovacuum_analyze_threshold and autovacuum_analyze_scale_factor at their defaults
// (PostgreSQL 15 documentation, 20.10 "Automatic Vacuuming"; from memory: 50 rows and 0.1).
export const ANALYZE_BASE_ROWS = 50;
export const ANALYZE_SCALE = 0.1;

/**
 * Whether a table is due: the rule of autovacuum's analyze threshold (PostgreSQL 15
 * documentation, 25.1.6 "The Autovacuum Daemon": analyze threshold = base threshold + scale
 * factor × number of tuples), where the rows added since are estimated the way the planner
 * estimates a table's size, by scaling reltuples by the pages it has now against relpages
 * (documentation 76.1 "Row Estimation Examples"). PGlite keeps no reliable change counters
 * (pg_stat_user_tables stays at 0 there), so pages are the measure. A table never analysed is due
 * as soon as it has a page; an empty one never is.
 */
export function isTableDue(size: TableSize): boolean {
	if (size.pages === 0) return false;
	if (size.reltuples < 0 || size.relpages === 0) return true;
	const rowsNow = (size.reltuples / size.relpages) * size.pages;
	return rowsNow - size.reltuples > ANALYZE_BASE_ROWS + ANALYZE_SCALE * size.reltuples;
}

/** Every ordinary table of the current schema with its sizes, largest first. */
export async function readTableSizes(db: Executor): Promise<TableSize[]> {
	const rows = await queryRows<[string, number | string, number | string, number | string]>(
		db,
		`select c.relname, pg_catalog.pg_relation_size(c.oid) / pg_catalog.current_setting('block_size')::bigint, c.relpages, c.reltuples
		from pg_catalog.pg_class as c join pg_catalog.pg_namespace as n on n.oid = c.relnamespace
		where c.relkind = 'r' and n.nspname = pg_catalog.current_schema()
		order by 2 desc, 1`,
		[]
	);
	return rows.map(([table, pages, relpages, reltuples]) => ({ table, pages: Number(pages), relpages: Number(relpages), reltuples: Number(reltuples) }));
}

export interface UpkeepReport {
	tables: string[];
	/** Milliseconds each table took, in `tables` order. */
	tableMs: number[];
	ms: number;
}

/**
 * VACUUM (ANALYZE) of the tables that are due (or of `tables`, or of all). Takes the database,
 * never a transaction: VACUUM cannot run inside one. One statement per table, so that on PGlite,
 * where VACUUM holds the one connection, requests waiting behind a large table get their turn
 * before the next.
 */
export async function runUpkeep(db: Database, options: { tables?: string[]; all?: boolean } = {}): Promise<UpkeepReport> {
	const started = performance.now();
	const sizes = await readTableSizes(db);
	const known = new Set(sizes.map((s) => s.table));
	const tables = options.all ? [...known] : options.tables ? options.tables.filter((t) => known.has(t)) : sizes.filter(isTableDue).map((s) => s.table);
	const client = pgliteClientOf<{ exec(text: string): Promise<unknown> }>(db);
	const tableMs: number[] = [];
	for (const table of tables) {
		const t0 = performance.now();
		const statement = `VACUUM (ANALYZE) ${quoteIdent(table)}`;
		if (client) await client.exec(statement);
		else await db.execute(sql.raw(statement));
		tableMs.push(performance.now() - t0);
	}
	return { tables, tableMs, ms: performance.now() - started };
}

function quoteIdent(name: string): string {
	return `"${name.replace(/"/g, '""')}"`;
}

interface Schedule {
	interval: ReturnType<typeof setInterval>;
	first: ReturnType<typeof setTimeout>;
	/** The run in progress, if any: stopping waits for it, so no VACUUM is left queued behind close(). */
	current: Promise<UpkeepReport | null> | null;
	stopped: boolean;
}

const running = new WeakMap<object, Schedule>();

/**
 * Starts the upkeep timer for an embedded database (a PostgreSQL server has autovacuum; returns
 * false and does nothing there). Checks every `checkMinutes` (the catalogue read is cheap) and
 * vacuums what is due; unref'd, off the request path, never two runs at once.
 */
export function startUpkeepSchedule(handle: DatabaseHandle, options: { checkMinutes?: number; firstAfterSeconds?: number } = {}): boolean {
	if (handle.kind !== 'pglite') return false;
	if (running.has(handle)) return true;
	const run = async (): Promise<UpkeepReport | null> => {
		try {
			const report = await runUpkeep(handle.db);
			if (report.tables.length > 0) {
				const each = report.tables.map((t, i) => `${t} ${Math.round(report.tableMs[i])} ms`).join(', ');
				console.log(`[db] upkeep: VACUUM (ANALYZE) of ${each}`);
			}
			return report;
		} catch (err) {
			console.error('[db] upkeep failed:', err instanceof Error ? err.message : err);
			return null;
		}
	};
	const tick = () => {
		if (schedule.current || schedule.stopped) return;
		schedule.current = run().finally(() => {
			schedule.current = null;
		});
	};
	// The first run waits a little, so a start-up with a large unanalysed ledger answers requests first.
	const schedule: Schedule = { interval: setInterval(tick, (options.checkMinutes ?? 10) * 60_000), first: setTimeout(tick, (options.firstAfterSeconds ?? 60) * 1000), current: null, stopped: false };
	schedule.interval.unref?.();
	schedule.first.unref?.();
	running.set(handle, schedule);
	return true;
}

/** Stops the timer and waits for a run in progress (call before closing the database). */
export async function stopUpkeepSchedule(handle: DatabaseHandle): Promise<void> {
	const schedule = running.get(handle);
	if (!schedule) return;
	running.delete(handle);
	schedule.stopped = true;
	clearInterval(schedule.interval);
	clearTimeout(schedule.first);
	await schedule.current;
}
