import { asc, eq } from 'drizzle-orm';
import { canonicalJson } from '$lib/domain/canonical';
import { analyseCycleDetail } from '$lib/domain/lyo/analysis';
import { buildChartOverlay } from '$lib/domain/lyo/overlay';
import type { ScaledTemplate } from '$lib/domain/template';
import type { Database, Executor } from '../db/client';
import { batchDisposition, masterRecord, signature } from '../db/schema';
import { buildBatchView, loadBatchRecords } from '../batches/query';
import { getRun, listRuns } from '../cycles/runs';
import { loadSeriesCached } from '../cycles/series-store';
import { buildChartData } from '../cycles/chart';
import { readTrailBatch, type TrailFilter } from '../audit/trail';
import type { SignedCheckpoint } from '../audit/checkpoint';
import type { ChartModel } from './chart';
import type { AuditRow, RecordModel, SignatureRow } from './model';

/** Points per channel in the printed chart: min/max buckets keep every spike (domain/lyo/series.ts). */
const CHART_POINTS = 900;

export interface TrailRead {
	rows: AuditRow[];
	/** the stored events as hashed, for the attached electronic copy */
	stored: { seq: number; prevHash: string; hash: string; event: unknown }[];
}

/** The events of a filter up to a checkpoint, oldest first, at most `limit` (the rest are counted). */
export async function readTrail(db: Executor, filter: TrailFilter, timeZone: string, upTo: number, limit: number): Promise<TrailRead & { total: number }> {
	const out: TrailRead = { rows: [], stored: [] };
	let after = 0;
	let total = 0;
	for (;;) {
		const batch = await readTrailBatch(db, filter, timeZone, after, upTo, 2000);
		for (const r of batch) {
			total += 1;
			if (out.rows.length >= limit) continue;
			const seq = Number(r.seq);
			out.rows.push({ seq, at: r.at, actorName: r.actorName, action: r.action, entityType: r.entityType, entityId: r.entityId, reason: r.reason, before: r.before, after: r.after, hash: r.hash });
			out.stored.push({ seq, prevHash: r.prevHash, hash: r.hash, event: JSON.parse(r.canonical) });
		}
		if (batch.length < 2000) break;
		after = Number(batch[batch.length - 1].seq);
	}
	return { ...out, total };
}

async function loadCharts(db: Executor, batchId: string): Promise<ChartModel[]> {
	const runs = (await listRuns(db, { batchId })).reverse();
	const charts: ChartModel[] = [];
	for (const summary of runs) {
		const run = await getRun(db, summary.id);
		const series = run ? await loadSeriesCached(db, run.id) : null;
		if (!run || !series) continue;
		const detail = analyseCycleDetail(series, run.recipe);
		const overlay = buildChartOverlay(series, detail);
		const data = buildChartData(series, { channels: null, from: null, to: null, maxPoints: CHART_POINTS });
		charts.push({
			title: `${run.equipmentCode} · ${run.fileName} · SHA-256 ${run.fileSha256}`,
			t: data.t,
			channels: data.channels,
			overlay: { phases: overlay.phases, shelfBands: overlay.shelfBands, pressureBands: overlay.pressureBands, shelfSetpoint: overlay.shelfSetpoint, excursions: overlay.excursions }
		});
	}
	return charts;
}

/** Plain JSON: Date → ISO text, undefined dropped, so RFC 8785 sees exactly what a reader will. */
function plain(value: unknown): unknown {
	return JSON.parse(JSON.stringify(value));
}

/**
 * Everything the printed record shows, read in one go, and the electronic original it carries:
 * the batch row with its frozen snapshot, every entry, verification, signature, deviation,
 * attachment (metadata) and cycle-run analysis, and the batch's audit events as hashed, up to the
 * given checkpoint. Null: no such batch.
 */
export async function loadRecordModel(
	db: Database,
	batchId: string,
	context: { site: { name: string; timeZone: string }; generatedAt: string; generatedBy: { id: string | null; name: string }; checkpoint: SignedCheckpoint | null }
): Promise<RecordModel | null> {
	const records = await loadBatchRecords(db, batchId);
	if (!records) return null;
	const view = await buildBatchView(db, records);
	const [master] = await db.select({ code: masterRecord.code, version: masterRecord.version }).from(masterRecord).where(eq(masterRecord.id, records.batch.masterRecordId));
	const sigRows = await db.select().from(signature).where(eq(signature.batchId, batchId)).orderBy(asc(signature.at));
	const signatures: SignatureRow[] = sigRows.map((s) => ({ printedName: s.printedName, meaning: s.meaning, at: s.at, timeZone: s.timeZone, method: s.method, entityType: s.entityType, entityId: s.entityId }));
	// REV's disposition (tables/review.ts): the decision's comment beside its signature.
	const [disposition] = await db.select().from(batchDisposition).where(eq(batchDisposition.batchId, batchId));
	const charts = await loadCharts(db, batchId);
	const trail = await readTrail(db, { batch: batchId }, context.site.timeZone, context.checkpoint?.size ?? Number.MAX_SAFE_INTEGER, Number.MAX_SAFE_INTEGER);
	const runs = await listRuns(db, { batchId });
	const canonical = canonicalJson(
		plain({
			type: 'rimebook.executed-batch-record',
			version: 1,
			generatedAt: context.generatedAt,
			generatedBy: context.generatedBy,
			site: context.site,
			master: master ?? null,
			batch: records.batch,
			disposition: disposition ?? null,
			entries: records.entries,
			verifications: records.verifications,
			signatures: sigRows,
			deviations: records.deviations,
			attachments: records.attachments,
			cycleRuns: runs,
			audit: { checkpoint: context.checkpoint, events: trail.stored }
		})
	);
	return {
		site: context.site,
		generatedAt: context.generatedAt,
		generatedBy: context.generatedBy.name,
		view,
		master: master ?? null,
		bounds: (records.batch.scaled as ScaledTemplate | null)?.bounds ?? {},
		signatures,
		// REV signs the disposition with meaning released / rejected (domain/signature.ts) on the batch.
		dispositions: signatures.filter((s) => s.meaning === 'released' || s.meaning === 'rejected'),
		dispositionComment: disposition?.comment ?? null,
		charts,
		audit: { events: trail.rows, total: trail.total, checkpoint: context.checkpoint, filter: { batch: batchId } },
		canonical
	};
}
