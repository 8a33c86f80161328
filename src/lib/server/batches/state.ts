import { eq, sql } from 'drizzle-orm';
import type { Executor } from '../db/client';
import { batch, type BatchStatus } from '../db/schema';

export { OPEN_BATCH_STATUSES, isBatchOpen } from '$lib/domain/batch/status';

/** The batch's version alone: what a polling page compares before asking for the whole record. */
export async function batchVersion(db: Executor, batchId: string): Promise<number | null> {
	const [row] = await db.select({ version: batch.version }).from(batch).where(eq(batch.id, batchId));
	return row?.version ?? null;
}

/**
 * Bumps the batch's version (optimistic concurrency: every write to a batch or what hangs off it
 * does, so polling pages and `expectedVersion` checks see it) and, if given, sets its status.
 * Call it inside the unit of work that writes, after locking the batch row
 * (loadBatchRecords(tx, id, { lock: true })). Returns the new version. Status changes are the
 * caller's to audit.
 */
export async function bumpBatchVersion(tx: Executor, batchId: string, status?: BatchStatus): Promise<number> {
	const [row] = await tx
		.update(batch)
		.set(status ? { version: sql`${batch.version} + 1`, status } : { version: sql`${batch.version} + 1` })
		.where(eq(batch.id, batchId))
		.returning({ version: batch.version });
	if (!row) throw new Error(`bumpBatchVersion: there is no batch ${batchId}.`);
	return row.version;
}
