import { error } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { hasPermission } from '$lib/domain/permissions';
import { analyseCycleDetail } from '$lib/domain/lyo/analysis';
import { buildChartOverlay } from '$lib/domain/lyo/overlay';
import { planPhaseDurations } from '$lib/domain/lyo/recipe';
import { getRun } from '$lib/server/cycles/runs';
import { loadSeriesCached } from '$lib/server/cycles/series-store';
import { listLeakTests, recordRunLeakTest } from '$lib/server/cycles/leak';
import { invalidWindow, leakTestFailure } from '$lib/server/cycles/http';
import { getEquipment, lyophilizerPropertiesSchema } from '$lib/server/equipment/registry';

export const load = (async (event) => {
	const user = requirePermission(event, 'cycle.read');
	const run = await getRun(database.db, event.params.id);
	if (!run) error(404, { message: 'No such run.' });
	const series = await loadSeriesCached(database.db, run.id);
	if (!series) error(404, { message: 'The run has no stored series.' });
	// Recomputed from the stored series and recipe: the page shows the detail, and whether the
	// stored analysis is reproduced exactly (it is unless the analysis code changed since).
	const detail = analyseCycleDetail(series, run.recipe);
	const { durationS, samples, phases, excursions, endpoint, product, warnings } = detail;
	const reproduced = JSON.stringify({ durationS, samples, phases, excursions, endpoint, product, warnings }) === JSON.stringify(run.analysis);
	const dryer = await getEquipment(database.db, run.equipmentId);
	const props = lyophilizerPropertiesSchema.safeParse(dryer?.properties);
	const leakTests = await listLeakTests(database.db, { runId: run.id });
	return {
		run: {
			id: run.id,
			equipmentId: run.equipmentId,
			equipmentCode: run.equipmentCode,
			equipmentName: run.equipmentName,
			batchId: run.batchId,
			batchNumber: run.batchNumber,
			stepKey: run.stepKey,
			fileName: run.fileName,
			fileSha256: run.fileSha256,
			fileBytes: run.fileBytes,
			samples: run.samples,
			durationS: run.durationS,
			loggerStart: run.loggerStart,
			uploadedByName: run.uploadedByName,
			uploadedAt: run.uploadedAt,
			recipeSource: run.recipe === null ? 'none' : run.batchId ? 'batch' : 'given',
			criticalC: run.recipe?.product.criticalTemperatureC ?? null,
			requiredMarginC: run.recipe?.product.marginC ?? null
		},
		analysis: run.analysis,
		reproduced,
		planned: run.recipe ? planPhaseDurations(run.recipe) : {},
		overlay: buildChartOverlay(series, detail),
		channels: series.channels.map((c) => ({ id: c.id, role: c.role, unit: c.unit })),
		leak: props.success ? { volumeL: props.data.chamberVolumeL, limit: props.data.leakRateLimitMbarLPerS } : null,
		leakTests: leakTests.map((l) => ({ id: l.id, method: l.method, input: l.input as Record<string, number>, rate: l.leakRateMbarLPerS, limit: l.limitMbarLPerS, passed: l.passed, result: l.result as Record<string, number>, by: l.createdByName, at: l.createdAt.toISOString() })),
		canUpload: hasPermission(user.roles, 'cycle.upload')
	};
}) satisfies PageServerLoad;

export const actions = {
	leak: async (event) => {
		const user = requirePermission(event, 'cycle.upload');
		const form = await event.request.formData();
		const fromS = Number(form.get('fromH')) * 3600;
		const toS = Number(form.get('toH')) * 3600;
		if (!Number.isFinite(fromS) || !Number.isFinite(toS) || !(toS > fromS)) return leakTestFailure(invalidWindow(), event.locals.locale);
		try {
			await recordRunLeakTest(database.db, { id: user.id, name: user.name }, event.params.id, { fromS, toS });
			return { saved: true };
		} catch (e) {
			return leakTestFailure(e, event.locals.locale);
		}
	}
} satisfies Actions;
