import { createHash, randomUUID } from 'node:crypto';
import { desc, eq } from 'drizzle-orm';
import { analyseCycle, type CycleAnalysis } from '$lib/domain/lyo/analysis';
import { CycleLogError, importCycleLog, type CycleLogImport } from '$lib/domain/lyo/log-import';
import { MAX_LOG_BYTES, type CycleLogMapping } from '$lib/domain/lyo/mapping';
import type { Recipe } from '$lib/domain/lyo/recipe';
import { describeUsabilityProblem } from '$lib/domain/equipment';
import type { Actor } from '../audit/ledger';
import type { Database, Executor } from '../db/client';
import { batch, cycleRun, equipment, type CycleRun, type Equipment } from '../db/schema';
import { isBatchOpen } from '$lib/domain/batch/status';
import { bumpBatchVersion } from '../batches/state';
import { runUnitOfWork, type UnitOfWork } from '../work';
import { checkEquipmentUsableById } from '../equipment/usable';
import { findStepRecipe } from './recipe-source';
import { hashSeries, storeSeries } from './series-store';
import { raiseDeviation } from '../deviations';
import type { Excursion } from '$lib/domain/lyo/excursions';

/** An expected refusal of an upload: the file, the mapping, the equipment or the batch step. */
export class CycleRunError extends Error {
	constructor(
		message: string,
		readonly status: 400 | 404 | 409 | 413 | 422 = 422,
		/** the line of the log at fault, when there is one */
		readonly line: number | null = null
	) {
		super(message);
		this.name = 'CycleRunError';
	}
}

export interface LogUpload {
	fileName: string;
	bytes: Uint8Array;
	mapping: CycleLogMapping;
}

/** Decodes and reads a log; every problem becomes a CycleRunError with the line. */
export function readLog(upload: LogUpload): CycleLogImport {
	if (upload.bytes.byteLength === 0) throw new CycleRunError('the file is empty', 422);
	if (upload.bytes.byteLength > MAX_LOG_BYTES) {
		throw new CycleRunError(`the file is ${(upload.bytes.byteLength / 1048576).toFixed(1)} MB; the largest log accepted is ${MAX_LOG_BYTES / 1048576} MB`, 413);
	}
	const text = new TextDecoder('utf-8').decode(upload.bytes);
	try {
		return importCycleLog(text, upload.mapping, { byteLength: upload.bytes.byteLength });
	} catch (e) {
		if (e instanceof CycleLogError) throw new CycleRunError(e.message, 422, e.line);
		throw e;
	}
}

/** POST /api/cycles/analyse: the analysis of a log without storing anything. */
export function analyseUpload(upload: LogUpload, recipe: Recipe | null): CycleAnalysis {
	return analyseCycle(readLog(upload).series, recipe);
}

export interface RunTarget {
	equipmentId: string;
	/** recipe to check against when the run is not for a batch step */
	recipe: Recipe | null;
	batchId: string | null;
	stepKey: string | null;
}

/**
 * Imports a cycle log of a lyophilizer: read (everything checked before anything is written),
 * analysed against the recipe — the batch step's, when the run is for a batch — and stored with
 * its series in one audited unit of work. A run for a batch step needs the lyophilizer and its
 * instruments in service and in calibration (21 CFR 211.68(a), 211.160(b)(4)).
 */
/**
 * Excursions of the same role and direction that overlap in time are one event (the shelf inlet
 * and outlet probes both see a shelf-fluid excursion): one deviation names them all.
 */
export function groupExcursions(excursions: readonly Excursion[], roleOf: (channel: string) => string): Excursion[][] {
	const groups: { role: string; kind: string; endS: number; items: Excursion[] }[] = [];
	for (const e of [...excursions].sort((a, b) => a.startS - b.startS)) {
		const role = roleOf(e.channel);
		const open = groups.find((g) => g.role === role && g.kind === e.kind && e.startS <= g.endS);
		if (open) {
			open.items.push(e);
			open.endS = Math.max(open.endS, e.endS);
		} else groups.push({ role, kind: e.kind, endS: e.endS, items: [e] });
	}
	return groups.map((g) => g.items);
}

/** One sentence for the deviation an excursion raises (times in h from the log start). */
export function describeExcursion(e: Excursion, unit: string | null): string {
	const h = (s: number) => (s / 3600).toFixed(2);
	const peak = unit === 'Pa' ? `${Number(e.peak.toPrecision(3))} Pa` : `${e.peak.toFixed(1)} °C`;
	return `${e.channel} ${e.kind} its acceptable range from ${h(e.startS)} h to ${h(e.endS)} h of the log (${Math.round(e.durationS / 60)} min), peak ${peak}.`;
}

/**
 * The recipe of a run's batch step, with the checks a run for a batch needs: the batch still
 * open (the same OPEN_BATCH_STATUSES rule as entries), the step with a recipe, the lyophilizer
 * usable. `lock` takes the batch row FOR UPDATE, as loadBatchRecords(tx, id, { lock: true })
 * does, so the batch cannot close between this check and the write (REVIEW finding 4).
 */
async function checkBatchTarget(reader: Executor, dryer: Equipment, batchId: string, stepKey: string, lock: boolean): Promise<Recipe> {
	const query = reader.select().from(batch).where(eq(batch.id, batchId));
	const [b] = lock ? await query.for('update') : await query;
	if (!b) throw new CycleRunError('No such batch.', 404);
	if (!isBatchOpen(b.status)) throw new CycleRunError(`Batch ${b.number} is ${b.status}; a run can only be added while it is executed.`, 409);
	const stepRecipe = findStepRecipe(b.snapshot, stepKey);
	if (!stepRecipe) throw new CycleRunError(`Step "${stepKey}" of batch ${b.number} has no freeze-drying recipe.`, 409);
	const usable = await checkEquipmentUsableById(reader, dryer.id);
	if (usable && !usable.usable) {
		throw new CycleRunError(`${dryer.code} cannot be used in a batch step: ${usable.problems.map(describeUsabilityProblem).join('; ')}.`, 409);
	}
	return stepRecipe;
}

export async function importRun(
	db: Database,
	actor: Actor,
	target: RunTarget,
	upload: LogUpload,
	/** an open unit of work to write in (the demo seed); by default the import opens its own */
	within?: UnitOfWork
): Promise<{ runId: string; analysis: CycleAnalysis; deviations: { id: string; number: string }[]; batchVersion: number | null }> {
	const reader: Executor = within ? within.tx : db;
	const [dryer] = await reader.select().from(equipment).where(eq(equipment.id, target.equipmentId));
	if (!dryer) throw new CycleRunError('No such equipment.', 404);
	if (dryer.class !== 'lyophilizer') throw new CycleRunError(`${dryer.code} is not a lyophilizer.`, 409);
	if ((target.batchId === null) !== (target.stepKey === null)) throw new CycleRunError('A batch and a step go together: give both or neither.', 400);
	// Checked before the (long) read so a refusal comes fast; checked again, locked, in the write.
	const recipe = target.batchId && target.stepKey ? await checkBatchTarget(reader, dryer, target.batchId, target.stepKey, false) : target.recipe;
	const read = readLog(upload);
	const analysis = analyseCycle(read.series, recipe);
	const fileSha256 = createHash('sha256').update(upload.bytes).digest('hex');
	const seriesSha256 = hashSeries(read.series);
	const runId = randomUUID();
	const deviations: { id: string; number: string }[] = [];
	let batchVersion: number | null = null;
	const write = async (uow: UnitOfWork) => {
		if (target.batchId && target.stepKey) {
			const locked = await checkBatchTarget(uow.tx, dryer, target.batchId, target.stepKey, true);
			// The snapshot is frozen at issue; a different recipe here means the analysis is stale.
			if (JSON.stringify(locked) !== JSON.stringify(recipe)) throw new CycleRunError(`The recipe of step "${target.stepKey}" changed while the log was read; upload it again.`, 409);
		}
		const row = {
			id: runId,
			equipmentId: dryer.id,
			batchId: target.batchId,
			stepKey: target.stepKey,
			fileName: upload.fileName,
			fileSha256,
			fileBytes: upload.bytes.byteLength,
			// fixed here so a step signature binds the imported series, not a cached copy (finding 32)
			seriesSha256,
			mapping: upload.mapping,
			recipe,
			analysis,
			samples: analysis.samples,
			durationS: analysis.durationS,
			loggerStart: read.loggerStart,
			uploadedBy: actor.id,
			uploadedByName: actor.name
		};
		await uow.tx.insert(cycleRun).values(row);
		await storeSeries(uow.tx, runId, read.series);
		// Each excursion of a run for a batch step is a deviation (21 CFR 211.100(b), 211.192),
		// raised in the same unit of work as the run so neither exists without the other.
		if (target.batchId) {
			for (const group of groupExcursions(analysis.excursions, (id) => read.series.channels.find((c) => c.id === id)?.role ?? 'other')) {
				const unitOf = (id: string) => read.series.channels.find((c) => c.id === id)?.unit ?? null;
				const first = group[0];
				deviations.push(
					await raiseDeviation(uow, {
						batchId: target.batchId,
						stepKey: target.stepKey,
						runId,
						source: 'auto',
						kind: 'cycle-excursion',
						title: `Freeze-drying excursion: ${group.map((e) => e.channel).join(', ')} ${first.kind} range`,
						description: `${group.map((e) => describeExcursion(e, unitOf(e.channel))).join(' ')} Cycle run ${runId} on ${dryer.code}, file ${upload.fileName} (SHA-256 ${fileSha256}).`
					})
				);
			}
		}
		// The run and its deviations hang off the batch: a new version tells polling pages and
		// expectedVersion checks (status unchanged: a run alone performs no step).
		if (target.batchId) batchVersion = await bumpBatchVersion(uow.tx, target.batchId);
		await uow.audit({
			action: 'cycle-run.import',
			entityType: 'cycle-run',
			entityId: runId,
			batchId: target.batchId,
			after: {
				equipment: dryer.code,
				stepKey: target.stepKey,
				fileName: upload.fileName,
				fileSha256,
				fileBytes: upload.bytes.byteLength,
				seriesSha256,
				mapping: upload.mapping,
				withRecipe: recipe !== null,
				samples: analysis.samples,
				durationS: analysis.durationS,
				excursions: analysis.excursions.length,
				endpoint: analysis.endpoint,
				product: analysis.product,
				deviations: deviations.map((d) => d.number)
			}
		});
	};
	if (within) await write(within);
	else await runUnitOfWork(db, actor, write);
	return { runId, analysis, deviations, batchVersion };
}

export interface RunSummary {
	id: string;
	equipmentId: string;
	equipmentCode: string;
	batchId: string | null;
	batchNumber: string | null;
	stepKey: string | null;
	fileName: string;
	samples: number;
	durationS: number;
	excursions: number;
	uploadedByName: string;
	uploadedAt: string;
}

export async function listRuns(db: Executor, filter: { equipmentId?: string; batchId?: string } = {}, limit = 100): Promise<RunSummary[]> {
	const where = filter.equipmentId ? eq(cycleRun.equipmentId, filter.equipmentId) : filter.batchId ? eq(cycleRun.batchId, filter.batchId) : undefined;
	const rows = await db
		.select({ run: cycleRun, code: equipment.code, batchNumber: batch.number })
		.from(cycleRun)
		.innerJoin(equipment, eq(equipment.id, cycleRun.equipmentId))
		.leftJoin(batch, eq(batch.id, cycleRun.batchId))
		.where(where)
		.orderBy(desc(cycleRun.uploadedAt))
		.limit(limit);
	return rows.map(({ run, code, batchNumber }) => ({
		id: run.id,
		equipmentId: run.equipmentId,
		equipmentCode: code,
		batchId: run.batchId,
		batchNumber,
		stepKey: run.stepKey,
		fileName: run.fileName,
		samples: run.samples,
		durationS: run.durationS,
		excursions: (run.analysis as CycleAnalysis).excursions.length,
		uploadedByName: run.uploadedByName,
		uploadedAt: run.uploadedAt.toISOString()
	}));
}

export interface RunRecord extends Omit<CycleRun, 'uploadedAt' | 'analysis' | 'mapping' | 'recipe'> {
	uploadedAt: string;
	analysis: CycleAnalysis;
	mapping: CycleLogMapping;
	recipe: Recipe | null;
	equipmentCode: string;
	equipmentName: string;
	batchNumber: string | null;
}

export async function getRun(db: Executor, id: string): Promise<RunRecord | null> {
	const [row] = await db
		.select({ run: cycleRun, code: equipment.code, name: equipment.name, batchNumber: batch.number })
		.from(cycleRun)
		.innerJoin(equipment, eq(equipment.id, cycleRun.equipmentId))
		.leftJoin(batch, eq(batch.id, cycleRun.batchId))
		.where(eq(cycleRun.id, id));
	if (!row) return null;
	const { run } = row;
	return {
		...run,
		uploadedAt: run.uploadedAt.toISOString(),
		analysis: run.analysis as CycleAnalysis,
		mapping: run.mapping as CycleLogMapping,
		recipe: (run.recipe ?? null) as Recipe | null,
		equipmentCode: row.code,
		equipmentName: row.name,
		batchNumber: row.batchNumber
	};
}
