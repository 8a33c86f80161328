import type { Executor } from '../db/client';
import { getRun, groupExcursions, listRuns, type RunSummary } from '../cycles/runs';
import { hashSeries, listSeriesChannels, loadSeriesCached } from '../cycles/series-store';
import type { StoredCycleRun } from '$lib/domain/batch/values';
import { pairExcursionDeviations, type DeviationRef } from '$lib/domain/batch/cycle-summary';
import type { CycleAnalysis } from '$lib/domain/lyo/analysis';

/**
 * The cycle runs of a freeze-drying step (issue 7, "Into the batch record"): uploaded by the
 * cycles area for a batch and a step, taken here into the step's entry. The runs themselves are
 * the cycles area's (cycles/runs.ts); this reads them through its exports only.
 */

export type StepRunRead = { ok: true; value: StoredCycleRun } | { ok: false; code: 'no-run' | 'choose-run' | 'not-entered' | 'wrong-type'; message: string };

async function runsOfStep(db: Executor, batchId: string, stepKey: string): Promise<RunSummary[]> {
	return (await listRuns(db, { batchId })).filter((r) => r.stepKey === stepKey);
}

/**
 * The run a recipe field records: the one named (a run id), or the only one uploaded for the
 * step. The stored value carries the file's SHA-256 and the SHA-256 of the stored series as they
 * are now, so the "performed" signature binds the exact evidence (21 CFR 11.70; 11.10(a)).
 */
export async function readStepRun(db: Executor, input: { batchId: string; stepKey: string; raw: unknown }): Promise<StepRunRead> {
	const runs = await runsOfStep(db, input.batchId, input.stepKey);
	const blank = input.raw === undefined || input.raw === null || (typeof input.raw === 'string' && input.raw.trim() === '');
	let chosen: RunSummary | undefined;
	if (blank) {
		if (runs.length === 0) return { ok: false, code: 'no-run', message: 'no cycle run has been uploaded for this step yet; upload the cycle log first' };
		if (runs.length > 1) return { ok: false, code: 'choose-run', message: `${runs.length} cycle runs were uploaded for this step; choose the one this step records` };
		chosen = runs[0];
	} else {
		if (typeof input.raw !== 'string') return { ok: false, code: 'wrong-type', message: 'the id of a cycle run is expected' };
		const id = input.raw.trim();
		chosen = runs.find((r) => r.id === id);
		if (!chosen) return { ok: false, code: 'not-entered', message: `cycle run ${id} is not one uploaded for this step` };
	}
	const run = await getRun(db, chosen.id);
	const series = run ? await loadSeriesCached(db, chosen.id) : null;
	if (!run || !series) return { ok: false, code: 'not-entered', message: `cycle run ${chosen.id} has no stored series` };
	return {
		ok: true,
		value: {
			kind: 'cycle-run',
			runId: run.id,
			equipmentCode: run.equipmentCode,
			fileName: run.fileName,
			fileSha256: run.fileSha256,
			seriesSha256: hashSeries(series),
			samples: run.samples,
			durationS: run.durationS,
			excursions: run.analysis.excursions.length,
			uploadedAt: run.uploadedAt
		}
	};
}

export interface StepRunExcursion {
	channel: string;
	role: string;
	/** canonical unit of the channel (degC, Pa) */
	unit: string;
	kind: 'above' | 'below';
	startS: number;
	endS: number;
	durationS: number;
	peak: number;
	deviation: DeviationRef | null;
}

export interface StepRunView {
	id: string;
	equipmentCode: string;
	fileName: string;
	fileSha256: string;
	uploadedByName: string;
	uploadedAt: string;
	samples: number;
	durationS: number;
	phases: CycleAnalysis['phases'];
	excursions: StepRunExcursion[];
	/** deviations of the run that could not be paired with one excursion */
	otherDeviations: DeviationRef[];
	endpoint: CycleAnalysis['endpoint'];
	product: CycleAnalysis['product'];
	warnings: string[];
}

/** Every run uploaded for the step, newest first, with its analysis and the deviations it raised. */
export async function listStepRuns(
	db: Executor,
	input: { batchId: string; stepKey: string; deviations: readonly (DeviationRef & { runId: string | null })[] }
): Promise<StepRunView[]> {
	const out: StepRunView[] = [];
	for (const summary of await runsOfStep(db, input.batchId, input.stepKey)) {
		const run = await getRun(db, summary.id);
		if (!run) continue;
		const channels = await listSeriesChannels(db, run.id);
		const channelOf = (id: string) => channels.find((c) => c.column === id);
		const groups = groupExcursions(run.analysis.excursions, (id) => channelOf(id)?.role ?? 'other');
		const raised = input.deviations.filter((d) => d.runId === run.id).map(({ id, number, status, createdAt }) => ({ id, number, status, createdAt }));
		const { byExcursion, unpaired } = pairExcursionDeviations(groups, raised);
		out.push({
			id: run.id,
			equipmentCode: run.equipmentCode,
			fileName: run.fileName,
			fileSha256: run.fileSha256,
			uploadedByName: run.uploadedByName,
			uploadedAt: run.uploadedAt,
			samples: run.samples,
			durationS: run.durationS,
			phases: run.analysis.phases,
			excursions: groups.flat().map((e) => ({
				channel: e.channel,
				role: channelOf(e.channel)?.role ?? 'other',
				unit: channelOf(e.channel)?.unit ?? '',
				kind: e.kind,
				startS: e.startS,
				endS: e.endS,
				durationS: e.durationS,
				peak: e.peak,
				deviation: byExcursion.get(e) ?? null
			})),
			otherDeviations: unpaired,
			endpoint: run.analysis.endpoint,
			product: run.analysis.product,
			warnings: run.analysis.warnings
		});
	}
	return out;
}
