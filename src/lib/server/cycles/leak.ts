import { randomUUID } from 'node:crypto';
import { desc, eq } from 'drizzle-orm';
import { z } from 'zod';
import { checkLeakRate, computeLeakRate, fitLeakRate, selectLeakPoints } from '$lib/domain/lyo/leak';
import { combineChannels } from '$lib/domain/lyo/series';
import type { Executor } from '../db/client';
import { cycleRun, equipment, leakTest, type LeakTest } from '../db/schema';
import { lyophilizerPropertiesSchema } from '../equipment/registry';
import type { UnitOfWork } from '../work';
import { loadSeriesCached } from './series-store';

export const leakTestSchema = z.discriminatedUnion('method', [
	/** least-squares fit of the run's capacitance manometer over the isolation period */
	z.object({ method: z.literal('fit'), runId: z.string().min(1), fromS: z.number().nonnegative(), toS: z.number().positive() }).refine((x) => x.toS > x.fromS, { path: ['toS'], message: 'the end is before the start' }),
	/** ΔP and Δt read by the person from the dryer's own test */
	z.object({ method: z.literal('entered'), deltaPmbar: z.number().nonnegative().max(1000), deltaTs: z.number().positive().max(86_400) })
]);

export class LeakTestError extends Error {
	constructor(message: string, readonly status: 400 | 404 | 409 | 422 = 422) {
		super(message);
		this.name = 'LeakTestError';
	}
}

/**
 * Evaluates and records a pressure-rise (leak) test of a lyophilizer against its own limit:
 * Q = V · ΔP / Δt (lyophilization.md, "Pressure-rise (leak) test"), V the chamber volume of the
 * registry. Audited; the result keeps the fit's statistics so a reviewer can judge it.
 */
export async function recordLeakTest(uow: UnitOfWork, equipmentId: string, input: z.input<typeof leakTestSchema>): Promise<LeakTest> {
	const test = leakTestSchema.parse(input);
	const [dryer] = await uow.tx.select().from(equipment).where(eq(equipment.id, equipmentId));
	if (!dryer) throw new LeakTestError('No such equipment.', 404);
	const props = lyophilizerPropertiesSchema.safeParse(dryer.properties);
	if (!props.success) throw new LeakTestError(`${dryer.code} has no chamber volume and leak-rate limit in the registry.`, 409);
	const { chamberVolumeL: volumeL, leakRateLimitMbarLPerS: limit } = props.data;
	let rate: number;
	let result: Record<string, unknown>;
	let runId: string | null = null;
	if (test.method === 'fit') {
		const [run] = await uow.tx.select({ id: cycleRun.id, equipmentId: cycleRun.equipmentId }).from(cycleRun).where(eq(cycleRun.id, test.runId));
		if (!run || run.equipmentId !== equipmentId) throw new LeakTestError('No such run of this lyophilizer.', 404);
		runId = run.id;
		const series = await loadSeriesCached(uow.tx, run.id);
		const manometer = series ? combineChannels(series, 'manometer', 'mean') : null;
		if (!series || !manometer) throw new LeakTestError('The run has no capacitance manometer channel to fit.', 422);
		const points = selectLeakPoints(series.t, manometer, test.fromS, test.toS);
		if (points.length < 3) throw new LeakTestError('Fewer than three manometer readings in the window.', 422);
		const fit = fitLeakRate(points, volumeL);
		rate = fit.leakRateMbarLPerS;
		result = { ...fit };
	} else {
		rate = computeLeakRate({ volumeL, deltaPmbar: test.deltaPmbar, deltaTs: test.deltaTs });
		result = { leakRateMbarLPerS: rate };
	}
	const assessment = checkLeakRate(rate, limit);
	const row = {
		id: randomUUID(),
		equipmentId,
		runId,
		method: test.method,
		input: test,
		volumeL,
		leakRateMbarLPerS: rate,
		limitMbarLPerS: limit,
		passed: assessment.passed,
		result,
		createdBy: uow.actor.id,
		createdByName: uow.actor.name
	};
	const [created] = await uow.tx.insert(leakTest).values(row).returning();
	await uow.audit({ action: 'leak-test.record', entityType: 'leak-test', entityId: row.id, after: { ...row, equipment: dryer.code } });
	return created;
}

export async function listLeakTests(db: Executor, filter: { equipmentId?: string; runId?: string }): Promise<LeakTest[]> {
	const where = filter.runId ? eq(leakTest.runId, filter.runId) : filter.equipmentId ? eq(leakTest.equipmentId, filter.equipmentId) : undefined;
	return db.select().from(leakTest).where(where).orderBy(desc(leakTest.createdAt)).limit(50);
}
