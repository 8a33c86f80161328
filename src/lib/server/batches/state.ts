import { eq } from 'drizzle-orm';
import type { Executor } from '../db/client';
import { batch } from '../db/schema';

/** The batch's version alone: what a polling page compares before asking for the whole record. */
export async function batchVersion(db: Executor, batchId: string): Promise<number | null> {
	const [row] = await db.select({ version: batch.version }).from(batch).where(eq(batch.id, batchId));
	return row?.version ?? null;
}
