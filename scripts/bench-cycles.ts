/**
 * Benchmark of the cycle-log import end to end (issue 7, "Speed"): a 72-hour log at 1 s with
 * 12 channels (259 201 rows, ~27 MB of CSV; invented data from the synthetic generator) is
 * parsed, stored and analysed through the same service as POST /api/equipment/<id>/runs, on
 * PGlite in a temporary folder (or the PostgreSQL server of DATABASE_URL_BENCH).
 *
 * Prints the time of each stage and two ratios against our goals:
 * - import (parse + convert + analyse + store) ÷ papaparse's bare parse of the same text: goal ≤ 3;
 * - serving down-sampled chart data (GET /api/runs/<id>/series work: load, min/max, JSON): goal < 100 ms,
 *   for the first load of a run (nothing cached) as well as for zooms.
 * Bounded: three imports and a few dozen chart requests, about a minute on 2 shared cores.
 *
 * Run: npm run bench:cycles
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Papa from 'papaparse';
import { openDatabase } from '../src/lib/server/db/client';
import { runUnitOfWork } from '../src/lib/server/work';
import { createEquipment } from '../src/lib/server/equipment/registry';
import { importRun, readLog } from '../src/lib/server/cycles/runs';
import { clearSeriesCache, loadSeriesCached } from '../src/lib/server/cycles/series-store';
import { serveChartData } from '../src/lib/server/cycles/chart';
import { analyseCycle } from '../src/lib/domain/lyo/analysis';
import { cycleLogMappingSchema } from '../src/lib/domain/lyo/mapping';
import { buildSyntheticCycle, writeCsvLog } from '../src/lib/domain/lyo/synthetic';
import { createSucroseRecipe } from '../tests/unit/lyo/fixtures';

function median(xs: number[]): number {
	const s = [...xs].sort((a, b) => a - b);
	return s[Math.floor(s.length / 2)];
}
async function time<T>(f: () => T | Promise<T>): Promise<{ value: T; ms: number }> {
	const t0 = performance.now();
	const value = await f();
	return { value, ms: performance.now() - t0 };
}

const recipe = createSucroseRecipe();
recipe.primaryDrying.steps[0].holdMin = 3425; // planned cycle 72 h less the 20 min tail
const { series } = buildSyntheticCycle({
	recipe,
	sampleS: 1,
	seed: 42,
	wide: true,
	endpoint: { midpointS: 45 * 3600, tauS: 3600 },
	shelfExcursions: [{ startS: 30 * 3600, endS: 30 * 3600 + 1800, amount: 5 }]
});
const csv = writeCsvLog(series, { time: 'clock', preamble: ['Invented benchmark log', ''], pressureUnit: 'mbar', placeholder: '999.9', quirks: true });
const bytes = new TextEncoder().encode(csv);
const mapping = cycleLogMappingSchema.parse({
	headerRow: 3,
	time: { column: 'Time', format: 'clock', start: '2026-01-12' },
	channels: series.channels.map((c) => ({ column: c.id, role: c.role, unit: c.unit === 'Pa' ? 'mbar' : 'degC' })),
	placeholders: [999.9]
});
console.log(`log: ${series.t.length} rows × ${series.channels.length} channels, ${(bytes.byteLength / 1048576).toFixed(1)} MB CSV`);

// Bare papaparse of the same text (what any import must at least do), median of 3.
const bare: number[] = [];
for (let i = 0; i < 3; i++) bare.push((await time(() => Papa.parse(csv))).ms);
const bareMs = median(bare);

// Stages alone, median of 3: decode + parse + convert (readLog), analysis.
const parse: number[] = [];
const analyse: number[] = [];
for (let i = 0; i < 3; i++) {
	const r = await time(() => readLog({ fileName: 'bench.csv', bytes, mapping }));
	parse.push(r.ms);
	analyse.push((await time(() => analyseCycle(r.value.series, recipe))).ms);
}

const dir = mkdtempSync(join(tmpdir(), 'rimebook-bench-cycles-'));
const handle = openDatabase({ dataDir: dir, databaseUrl: process.env.DATABASE_URL_BENCH });
try {
	await handle.connect();
	await handle.migrate('drizzle');
	const actor = { id: null, name: 'Benchmark' };
	const dryer = await runUnitOfWork(handle.db, actor, (uow) =>
		createEquipment(uow, {
			code: 'LYO-B1',
			name: 'Benchmark lyophilizer',
			class: 'lyophilizer',
			location: 'Bench',
			calibratedOn: null,
			calibrationDueOn: null,
			properties: { shelfAreaM2: 12, chamberVolumeL: 4200, condenserCapacityKg: 180, leakRateLimitMbarLPerS: 0.02 },
			reason: 'Benchmark'
		})
	);
	// The whole import as the API runs it, median of 3.
	const full: number[] = [];
	let runId = '';
	for (let i = 0; i < 3; i++) {
		const r = await time(() => importRun(handle.db, actor, { equipmentId: dryer.id, recipe, batchId: null, stepKey: null }, { fileName: 'bench.csv', bytes, mapping }));
		full.push(r.ms);
		runId = r.value.runId;
		if (i === 0) console.log(`analysis: ${r.value.analysis.phases.map((p) => p.name).join(', ')}; ${r.value.analysis.excursions.length} excursion(s); endpoint ${r.value.analysis.endpoint ? 'found' : 'none'}`);
	}
	const importMs = median(full);

	// Chart data as GET /api/runs/<id>/series serves it (serveChartData + JSON): the first load of
	// a run with an empty series cache (read from the stored overview), a cold 1 h zoom (a slice of
	// raw samples), then the same requests once the run is cached.
	const serve = async (from: number | null, to: number | null) => JSON.stringify(await serveChartData(handle.db, runId, { channels: null, from, to, maxPoints: 2000 }));
	const firstLoads: number[] = [];
	const coldZooms: number[] = [];
	let firstBytes = 0;
	for (let i = 0; i < 5; i++) {
		clearSeriesCache();
		const r = await time(() => serve(null, null));
		firstLoads.push(r.ms);
		firstBytes = r.value.length;
		coldZooms.push((await time(() => serve(i * 12 * 3600, i * 12 * 3600 + 3600))).ms);
	}
	clearSeriesCache();
	const fullLoad = await time(() => loadSeriesCached(handle.db, runId));
	const warm: number[] = [];
	const zoom: number[] = [];
	for (let i = 0; i < 10; i++) warm.push((await time(() => serve(null, null))).ms);
	for (let i = 0; i < 10; i++) zoom.push((await time(() => serve(i * 6 * 3600, i * 6 * 3600 + 3600))).ms);

	const row = (label: string, ms: number, extra = '') => console.log(`${label.padEnd(62)} ${ms.toFixed(0).padStart(7)} ms ${extra}`);
	const importRatio = importMs / bareMs;
	const firstMs = median(firstLoads);
	row('papaparse bare parse (median of 3)', bareMs);
	row('decode + parse + convert to canonical units (readLog)', median(parse));
	row('analyseCycle with recipe', median(analyse));
	row('importRun: read + analyse + store + audit (median of 3)', importMs);
	row('  of which store + hashes + audit (importRun − readLog − analysis)', importMs - median(parse) - median(analyse));
	row('first chart load, whole run, empty cache (median of 5)', firstMs, `(${(firstBytes / 1024).toFixed(0)} KB JSON, from the overview)`);
	row('first 1 h zoom, empty cache (median of 5)', median(coldZooms), '(slice of raw samples)');
	row('full series load into the cache (analysis page)', fullLoad.ms);
	row('chart data, whole run, cached (median of 10)', median(warm));
	row('chart data, 1 h zoom, cached (median of 10)', median(zoom));
	console.log('');
	console.log(`import ÷ bare parse: ${importRatio.toFixed(2)}× (goal ≤ 3×) ${importRatio <= 3 ? 'PASS' : 'MISSED'}`);
	console.log(`first chart load: ${firstMs.toFixed(0)} ms (goal < 100 ms) ${firstMs < 100 ? 'PASS' : 'MISSED'}`);
	const worstZoom = Math.max(...coldZooms, ...zoom, ...warm);
	console.log(`slowest other chart request: ${worstZoom.toFixed(0)} ms (goal < 100 ms) ${worstZoom < 100 ? 'PASS' : 'MISSED'}`);
} finally {
	await handle.close();
	rmSync(dir, { recursive: true, force: true });
}
