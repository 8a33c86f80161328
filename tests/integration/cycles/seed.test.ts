/** The demo scenario's cycle (seed/cycles.ts): one run on LYO-01 in the demo batch, one excursion, its deviation. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { createTestDatabase, type TestDatabase } from '../support/databases';
import { seedDemo } from '$lib/server/db/seed';
import { cycleRun, deviation, equipment } from '$lib/server/db/schema';
import { listRuns } from '$lib/server/cycles/runs';
import { clearSeriesCache } from '$lib/server/cycles/series-store';

let t: TestDatabase;
beforeAll(async () => {
	t = await createTestDatabase('pglite');
	await seedDemo(t.handle.db, { password: 'frost-demo-2026' });
}, 240_000);
afterAll(async () => {
	clearSeriesCache();
	await t?.dispose();
});

describe('demo cycle run', () => {
	it('has a full run on LYO-01 with the one injected shelf excursion, raised as a deviation of the demo batch', async () => {
		const [lyo] = await t.handle.db.select().from(equipment).where(eq(equipment.code, 'LYO-01'));
		const runs = await listRuns(t.handle.db, { equipmentId: lyo.id });
		expect(runs).toHaveLength(1);
		const [run] = await t.handle.db.select().from(cycleRun).where(eq(cycleRun.id, runs[0].id));
		const analysis = run.analysis as { excursions: { channel: string; kind: string; startS: number; durationS: number }[]; phases: { name: string }[]; endpoint: unknown };
		expect(analysis.phases.map((p) => p.name)).toEqual(['freezing', 'primary-drying', 'secondary-drying']);
		expect(analysis.endpoint).not.toBeNull();
		// Injected in seed/cycles.ts: +4 °C from 20 h for 40 min on both shelf probes (mean drives the band; each probe is checked).
		const shelf = analysis.excursions.filter((e) => e.channel.startsWith('shelf'));
		expect(shelf.length).toBeGreaterThanOrEqual(1);
		expect(analysis.excursions.every((e) => e.channel.startsWith('shelf') && e.kind === 'above' && Math.abs(e.startS - 72_000) < 600)).toBe(true);
		expect(run.batchId).not.toBeNull();
		const devs = await t.handle.db.select().from(deviation).where(eq(deviation.kind, 'cycle-excursion'));
		// One event, one deviation: the inlet and outlet probes' overlapping excursions are grouped.
		expect(devs).toHaveLength(1);
		expect(devs[0].title).toMatch(/shelf-1, shelf-2 above range|shelf-\d above range/);
		expect(devs.every((d) => d.batchId === run.batchId && d.stepKey === 'lyo_cycle' && d.runId === run.id && d.entryId === null)).toBe(true);
	});
});
