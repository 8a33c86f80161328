import { randomUUID } from 'node:crypto';
import { desc, eq } from 'drizzle-orm';
import { z } from 'zod';
import { checkLeakRate, computeLeakRate, fitLeakRate, selectLeakPoints } from '$lib/domain/lyo/leak';
import { combineChannels } from '$lib/domain/lyo/series';
import { isBatchOpen } from '$lib/domain/batch/status';
import type { Actor } from '../audit/ledger';
import type { Database, Executor } from '../db/client';
import { batch, cycleRun, equipment, leakTest, type LeakTest } from '../db/schema';
import { lyophilizerPropertiesSchema } from '../equipment/registry';
import { bumpBatchVersion } from '../batches/state';
import { raiseDeviation } from '../deviations';
import { runUnitOfWork, type UnitOfWork } from '../work';
import { loadSeriesCached } from './series-store';

export const leakTestSchema = z.discriminatedUnion('method', [
	/** least-squares fit of the run's capacitance manometer over the isolation period */
	z.object({ method: z.literal('fit'), runId: z.string().min(1), fromS: z.number().nonnegative(), toS: z.number().positive() }).refine((x) => x.toS > x.fromS, { path: ['toS'], message: 'the end is before the start' }),
	/** ΔP and Δt read by the person from the dryer's own test */
	z.object({ method: z.literal('entered'), deltaPmbar: z.number().nonnegative().max(1000), deltaTs: z.number().positive().max(86_400) })
]);

/**
 * Why a leak test was refused, with what the words for it need (the page shows the catalogue's
 * cycles.leak.errors[code] in the person's language, ./http.ts; the English message is for logs and the API).
 */
export interface LeakTestErrorParams {
	'equipment-not-found': Record<string, never>;
	'no-leak-properties': { equipment: string };
	'run-not-found': Record<string, never>;
	'batch-closed': { batch: string; status: string };
	'no-manometer': Record<string, never>;
	'too-few-readings': Record<string, never>;
	'invalid-window': Record<string, never>;
}
export type LeakTestErrorCode = keyof LeakTestErrorParams;
export type LeakTestErrorStatus = 400 | 404 | 409 | 422;

/** style.md: 400 bad input, 404 missing, 409 the record's state forbids it, 422 the data lacks what the test needs. */
const leakStatusOf: Record<LeakTestErrorCode, LeakTestErrorStatus> = {
	'equipment-not-found': 404,
	'no-leak-properties': 409,
	'run-not-found': 404,
	'batch-closed': 409,
	'no-manometer': 422,
	'too-few-readings': 422,
	'invalid-window': 400
};

export class LeakTestError<C extends LeakTestErrorCode = LeakTestErrorCode> extends Error {
	readonly status: LeakTestErrorStatus;
	constructor(
		readonly code: C,
		message: string,
		readonly params: LeakTestErrorParams[C]
	) {
		super(message);
		this.name = 'LeakTestError';
		this.status = leakStatusOf[code];
	}
}

/** A leak-test refusal as the union of its codes, so a switch on `code` narrows `params`. */
export type AnyLeakTestError = { [C in LeakTestErrorCode]: LeakTestError<C> }[LeakTestErrorCode];

export function isLeakTestError(err: unknown): err is AnyLeakTestError {
	return err instanceof LeakTestError;
}


/**
 * Evaluates and records a pressure-rise (leak) test of a lyophilizer against its own limit:
 * Q = V · ΔP / Δt (lyophilization.md, "Pressure-rise (leak) test"), V the chamber volume of the
 * registry. Audited; the result keeps the fit's statistics so a reviewer can judge it.
 */
export async function recordLeakTest(uow: UnitOfWork, equipmentId: string, input: z.input<typeof leakTestSchema>): Promise<LeakTest> {
	const test = leakTestSchema.parse(input);
	const [dryer] = await uow.tx.select().from(equipment).where(eq(equipment.id, equipmentId));
	if (!dryer) throw new LeakTestError('equipment-not-found', 'No such equipment.', {});
	const props = lyophilizerPropertiesSchema.safeParse(dryer.properties);
	if (!props.success) throw new LeakTestError('no-leak-properties', `${dryer.code} has no chamber volume and leak-rate limit in the registry.`, { equipment: dryer.code });
	const { chamberVolumeL: volumeL, leakRateLimitMbarLPerS: limit } = props.data;
	let rate: number;
	let result: Record<string, unknown>;
	let runId: string | null = null;
	let forBatch: { id: string; number: string; stepKey: string | null } | null = null;
	if (test.method === 'fit') {
		const [run] = await uow.tx.select({ id: cycleRun.id, equipmentId: cycleRun.equipmentId, batchId: cycleRun.batchId, stepKey: cycleRun.stepKey }).from(cycleRun).where(eq(cycleRun.id, test.runId));
		if (!run || run.equipmentId !== equipmentId) throw new LeakTestError('run-not-found', 'No such run of this lyophilizer.', {});
		runId = run.id;
		if (run.batchId) {
			// A test on a batch's run is part of that batch record (REVIEW finding 11): lock the batch
			// row so it cannot close meanwhile, and take it only while the batch is open, the same
			// OPEN_BATCH_STATUSES rule as entries and run imports.
			const [b] = await uow.tx.select({ id: batch.id, number: batch.number, status: batch.status }).from(batch).where(eq(batch.id, run.batchId)).for('update');
			if (!b || !isBatchOpen(b.status)) throw new LeakTestError('batch-closed', `Batch ${b?.number ?? run.batchId} is ${b?.status ?? 'missing'}; nothing more can be recorded on its runs.`, { batch: b?.number ?? run.batchId, status: b?.status ?? 'missing' });
			forBatch = { id: b.id, number: b.number, stepKey: run.stepKey };
		}
		const series = await loadSeriesCached(uow.tx, run.id);
		const manometer = series ? combineChannels(series, 'manometer', 'mean') : null;
		if (!series || !manometer) throw new LeakTestError('no-manometer', 'The run has no capacitance manometer channel to fit.', {});
		const points = selectLeakPoints(series.t, manometer, test.fromS, test.toS);
		if (points.length < 3) throw new LeakTestError('too-few-readings', 'Fewer than three manometer readings in the window.', {});
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
	let deviationNumber: string | null = null;
	if (forBatch && !assessment.passed) {
		// A leak rate over the dryer's limit during a batch's cycle is a deviation of that batch
		// (21 CFR 211.100(b), 211.192), raised with the test so neither exists without the other.
		const raised = await raiseDeviation(uow, {
			batchId: forBatch.id,
			stepKey: forBatch.stepKey,
			runId,
			source: 'auto',
			kind: 'leak-test-failed',
			title: `Leak test failed on ${dryer.code}`,
			description: `Pressure-rise test ${row.id} on run ${runId}: ${rate.toPrecision(3)} mbar·L/s against the limit ${limit} mbar·L/s of ${dryer.code}.`
		});
		deviationNumber = raised.number;
	}
	if (forBatch) await bumpBatchVersion(uow.tx, forBatch.id);
	await uow.audit({
		action: 'leak-test.record',
		entityType: 'leak-test',
		entityId: row.id,
		batchId: forBatch?.id ?? null,
		after: { ...row, equipment: dryer.code, deviation: deviationNumber }
	});
	return created;
}

/**
 * The leak-test service for routes (REVIEW finding 9): the run is found, the fit evaluated and
 * recorded in its own audited unit of work; routes only parse, guard and call.
 */
export async function recordRunLeakTest(db: Database, actor: Actor, runId: string, window: { fromS: number; toS: number }): Promise<LeakTest> {
	const [run] = await db.select({ id: cycleRun.id, equipmentId: cycleRun.equipmentId }).from(cycleRun).where(eq(cycleRun.id, runId));
	if (!run) throw new LeakTestError('run-not-found', 'No such run.', {});
	const test = leakTestSchema.safeParse({ method: 'fit', runId: run.id, ...window });
	if (!test.success) throw new LeakTestError('invalid-window', `The window is not valid: ${test.error.issues.map((i) => i.message).join('; ')}.`, {});
	return runUnitOfWork(db, actor, (uow) => recordLeakTest(uow, run.equipmentId, test.data));
}

export async function listLeakTests(db: Executor, filter: { equipmentId?: string; runId?: string }): Promise<LeakTest[]> {
	const where = filter.runId ? eq(leakTest.runId, filter.runId) : filter.equipmentId ? eq(leakTest.equipmentId, filter.equipmentId) : undefined;
	return db.select().from(leakTest).where(where).orderBy(desc(leakTest.createdAt)).limit(50);
}
