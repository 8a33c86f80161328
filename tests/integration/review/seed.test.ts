/** The demo scenario's second batch (seed/review.ts): executed through the real services, awaiting review. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { batch, deviation, masterRecord } from '$lib/server/db/schema';
import { loadReviewRecords, reviewItemsOf } from '$lib/server/review';
import { buildBatchView } from '$lib/server/batches/query';
import { clearSeriesCache } from '$lib/server/cycles/series-store';
import type { TestDatabase } from '../support/databases';
import { seededDatabase } from '../batches/support';

let t: TestDatabase;
beforeAll(async () => {
	t = await seededDatabase('pglite');
}, 240_000);
afterAll(async () => {
	clearSeriesCache();
	await t?.dispose();
});

describe('demo batch for review', () => {
	// 21 CFR 211.188(b), 211.192: every step signed, critical ones verified, the out-of-limit value's deviation awaiting QA.
	it('the bulk-solution batch awaits review with every step performed, its signatures bound, and its deviation pending QA approval', async () => {
		const db = t.handle.db;
		const [row] = await db.select({ id: batch.id, status: batch.status }).from(batch).innerJoin(masterRecord, eq(masterRecord.id, batch.masterRecordId)).where(eq(masterRecord.code, 'TAV-020-BS'));
		expect(row.status).toBe('awaiting-review');
		const r = (await loadReviewRecords(db, row.id))!;
		const view = await buildBatchView(db, r.records);
		expect(view.progress).toMatchObject({ done: 6, total: 6, complete: true });
		expect(view.unboundSignatures).toBe(0);
		expect(reviewItemsOf(r).map((i) => i.kind).sort()).toEqual(['audit-trail', 'deviation', 'out-of-limit']);
		const devs = await db.select().from(deviation).where(eq(deviation.batchId, row.id));
		expect(devs.map((d) => [d.kind, d.status])).toEqual([['out-of-limit', 'pending-qa-approval']]);
		// Units as people write them (NIST SP 811 §6: °C), not as formulas spell them (degC).
		expect(devs[0].description).toContain('25.8 °C is above');
		expect(devs[0].description).not.toContain('degC');
	});
});
