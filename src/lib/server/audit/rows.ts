import pg from 'pg';
import type { Executor } from '../db/client';

interface PgliteLike {
	query(text: string, params: unknown[], options: { rowMode: 'array' }): Promise<{ rows: unknown[][] }>;
}
interface PgLike {
	query(config: { text: string; values: unknown[]; rowMode: 'array' }): Promise<{ rows: unknown[][] }>;
}

/**
 * Rows as arrays straight from the driver, skipping drizzle's per-row object mapping: the
 * verification and checkpoint loops read millions of rows of plain text columns. Works inside a
 * transaction too (drizzle's transaction exposes its session client).
 */
export async function queryRows<T extends unknown[]>(executor: Executor, text: string, params: unknown[]): Promise<T[]> {
	const client = clientOf(executor);
	if (client instanceof pg.Pool || client instanceof pg.Client) return (await (client as PgLike).query({ text, values: params, rowMode: 'array' })).rows as T[];
	// PGlite, or a PGlite transaction.
	return (await (client as PgliteLike).query(text, params, { rowMode: 'array' })).rows as T[];
}

/** The PGlite client (or PGlite transaction) behind an executor; null on a PostgreSQL server (node-postgres). */
export function pgliteClientOf<T>(executor: Executor): T | null {
	const client = clientOf(executor);
	return client instanceof pg.Pool || client instanceof pg.Client || !client ? null : (client as T);
}

function clientOf(executor: Executor): unknown {
	const e = executor as unknown as { $client?: unknown; session?: { client?: unknown } };
	return e.session?.client ?? e.$client;
}
