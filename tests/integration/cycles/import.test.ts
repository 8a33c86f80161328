/**
 * Cycle-log import on every database kind: a synthetic log with known truth (invented data,
 * tests/unit/lyo/synthetic.ts) written as a logger's CSV with real-log quirks, imported,
 * stored, reloaded and analysed; and every bad input refused with its line, storing nothing.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestDatabase, databaseKinds, type TestDatabase } from '../support/databases';
import { createTestActor, createTestBatch, createTestDryer, countRows } from './support';
import { buildSyntheticCycle, writeCsvLog, type CsvLogOptions } from '$lib/domain/lyo/synthetic';
import { cycleLogMappingSchema, type CycleLogMappingInput } from '$lib/domain/lyo/mapping';
import { createSucroseRecipe } from '../../unit/lyo/fixtures';
import { CycleRunError, getRun, importRun } from '$lib/server/cycles/runs';
import { clearSeriesCache, loadSeries, loadSeriesCached } from '$lib/server/cycles/series-store';
import { buildChartData } from '$lib/server/cycles/chart';
import { recordLeakTest } from '$lib/server/cycles/leak';
import { changeStatus } from '$lib/server/equipment/registry';
import { runUnitOfWork } from '$lib/server/work';
import type { Actor } from '$lib/server/audit/ledger';

const recipe = createSucroseRecipe();
// Truth of the synthetic log (fixtures.ts: primary drying 14 400 – 89 400 s at 10 Pa, 8–12 Pa).
const SHELF_EXCURSION = { startS: 30_000, endS: 33_600, amount: 5 }; // −20 °C hold ± 3 °C → +5 °C is "above"
const ENDPOINT = { midpointS: 70_000, tauS: 1_800 };
const RISE = { startS: 50_000, durationS: 600, slopePaPerS: 0.002 }; // Q = 500 L · 0.00002 mbar/s = 0.01 mbar·L/s
const { series: truthSeries } = buildSyntheticCycle({
	recipe,
	sampleS: 10,
	seed: 7,
	noise: { pressureRel: 0.002 },
	endpoint: ENDPOINT,
	shelfExcursions: [SHELF_EXCURSION],
	pressureRise: RISE,
	gaps: [{ role: 'product', startS: 40_000, endS: 40_600 }]
});

const csvOptions: CsvLogOptions = {
	time: 'clock',
	startClockS: 20 * 3600, // starts at 20:00, so the 35 h log passes midnight twice
	preamble: ['Invented freeze dryer data export', 'Unit: LYO-T1', ''],
	pressureUnit: 'mbar',
	placeholder: '999.9',
	quirks: true
};
const goodCsv = writeCsvLog(truthSeries, csvOptions);
const goodMapping: CycleLogMappingInput = {
	headerRow: 4,
	time: { column: 'Time', format: 'clock', start: '2026-01-12' },
	channels: [
		{ column: 'shelf-1', role: 'shelf', unit: 'degC' },
		{ column: 'product-1', role: 'product', unit: 'degC' },
		{ column: 'cm', role: 'manometer', unit: 'mbar' },
		{ column: 'pirani', role: 'pirani', unit: 'mbar' }
	],
	placeholders: [999.9]
};
const bytes = (text: string) => new TextEncoder().encode(text);
const mapping = (m: CycleLogMappingInput = goodMapping) => cycleLogMappingSchema.parse(m);

/** The CSV with one line (1-based) replaced. */
function withLine(text: string, line: number, edit: (cells: string[]) => string[]): string {
	const lines = text.split('\r\n');
	lines[line - 1] = edit(lines[line - 1].split(',')).join(',');
	return lines.join('\r\n');
}

describe.each(databaseKinds)('cycle-log import on %s', (kind) => {
	let t: TestDatabase;
	let actor: Actor;
	let dryerId: string;
	let manometerId: string;

	beforeAll(async () => {
		t = await createTestDatabase(kind);
		actor = await createTestActor(t.handle.db);
		const { dryer, manometer } = await createTestDryer(t.handle.db, actor);
		dryerId = dryer.id;
		manometerId = manometer.id;
	});
	afterAll(async () => {
		clearSeriesCache();
		await t?.dispose();
	});

	async function importGood() {
		return importRun(t.handle.db, actor, { equipmentId: dryerId, recipe, batchId: null, stepKey: null }, { fileName: 'cycle.csv', bytes: bytes(goodCsv), mapping: mapping() });
	}

	it('imports, stores and reloads the series exactly; recovers the known excursion and endpoint', async () => {
		const { runId, analysis } = await importGood();
		expect(analysis.samples).toBe(truthSeries.t.length);
		// The clock passed midnight twice and was unwrapped: the duration is the generator's.
		expect(analysis.durationS).toBe(truthSeries.t[truthSeries.t.length - 1]);
		// One shelf excursion, as injected: start/end within one sample (10 s) plus the
		// interpolated crossing, peak within 4 σ of the 0.15 °C noise above −15 °C.
		const shelf = analysis.excursions.filter((e) => e.channel === 'shelf-1');
		expect(shelf).toHaveLength(1);
		expect(shelf[0].kind).toBe('above');
		expect(Math.abs(shelf[0].startS - SHELF_EXCURSION.startS)).toBeLessThanOrEqual(20);
		expect(Math.abs(shelf[0].endS - SHELF_EXCURSION.endS)).toBeLessThanOrEqual(20);
		expect(shelf[0].peak).toBeGreaterThan(-15);
		expect(shelf[0].peak).toBeLessThan(-15 + 4 * 0.15 + 0.01);
		// No pressure excursion: the leak-test rise (1.2 Pa on 10 Pa) stays inside 8–12 Pa.
		expect(analysis.excursions.filter((e) => e.channel === 'cm')).toHaveLength(0);
		// Comparative pressure (Patel, Doen & Pikal 2010): the tangent construction on a logistic
		// fall gives onset/offset at midpoint ∓ 2τ (synthetic.ts); tolerance 0.15 τ as measured
		// for the detector in tests/unit/lyo/endpoint.test.ts.
		expect(analysis.endpoint).not.toBeNull();
		const ep = analysis.endpoint!;
		expect(Math.abs(ep.midpointS - ENDPOINT.midpointS)).toBeLessThan(0.1 * ENDPOINT.tauS);
		expect(Math.abs(ep.onsetS - (ENDPOINT.midpointS - 2 * ENDPOINT.tauS))).toBeLessThan(0.15 * ENDPOINT.tauS);
		expect(Math.abs(ep.offsetS - (ENDPOINT.midpointS + 2 * ENDPOINT.tauS))).toBeLessThan(0.15 * ENDPOINT.tauS);
		expect(analysis.phases.map((p) => p.name)).toEqual(['freezing', 'primary-drying', 'secondary-drying']);

		const run = await getRun(t.handle.db, runId);
		expect(run?.loggerStart).toBe('2026-01-12T20:00:00');
		expect(run?.analysis).toEqual(JSON.parse(JSON.stringify(analysis)));
		const stored = await loadSeries(t.handle.db, runId);
		expect(Array.from(stored!.t)).toEqual(Array.from(truthSeries.t));
		// mbar written with 6 decimals = 1e-4 Pa resolution; converted exactly (NIST SP 811: mbar = 100 Pa).
		const cm = stored!.channels.find((c) => c.id === 'cm')!;
		const cmTruth = truthSeries.channels.find((c) => c.id === 'cm')!;
		let worst = 0;
		for (let i = 0; i < cm.values.length; i++) if (cmTruth.values[i] <= 133.3) worst = Math.max(worst, Math.abs(cm.values[i] - cmTruth.values[i]));
		expect(worst).toBeLessThanOrEqual(0.5e-4 + 1e-9);
		// Placeholders (999.9) written for the product gap came back as "no reading".
		const product = stored!.channels.find((c) => c.id === 'product-1')!;
		const gap = Array.from(stored!.t).flatMap((x, i) => (x >= 40_000 && x < 40_600 ? [product.values[i]] : []));
		expect(gap.length).toBe(60);
		expect(gap.every(Number.isNaN)).toBe(true);
	});

	it('fits the pressure-rise test in the log and recovers the leak rate within 3 %', async () => {
		const { runId } = await importGood();
		const test = await runUnitOfWork(t.handle.db, actor, (uow) => recordLeakTest(uow, dryerId, { method: 'fit', runId, fromS: RISE.startS + 10, toS: RISE.startS + RISE.durationS }));
		// Q = V · ΔP/Δt = 500 L × (0.002 Pa/s ÷ 100 Pa/mbar) = 0.01 mbar·L/s (lyophilization.md).
		expect(test.leakRateMbarLPerS).toBeGreaterThan(0.01 * 0.97);
		expect(test.leakRateMbarLPerS).toBeLessThan(0.01 * 1.03);
		expect(test.passed).toBe(true);
		const entered = await runUnitOfWork(t.handle.db, actor, (uow) => recordLeakTest(uow, dryerId, { method: 'entered', deltaPmbar: 0.024, deltaTs: 600 }));
		// lyophilization.md worked example scaled to V = 500 L: 500 × 0.024 / 600 = 0.02 mbar·L/s, at the limit → passes (≤).
		expect(entered.leakRateMbarLPerS).toBeCloseTo(0.02, 12);
		expect(entered.passed).toBe(true);
	});

	it('serves down-sampled chart data that keeps the excursion peak', async () => {
		const { runId } = await importGood();
		clearSeriesCache();
		const series = await loadSeriesCached(t.handle.db, runId);
		const chart = buildChartData(series!, { channels: ['shelf-1'], from: null, to: null, maxPoints: 400 });
		expect(chart.t.length).toBeLessThanOrEqual(400);
		expect(chart.samples).toBe(truthSeries.t.length);
		const fullMax = Math.max(...Array.from(series!.channels.find((c) => c.id === 'shelf-1')!.values).filter((v) => !Number.isNaN(v)));
		expect(Math.max(...(chart.channels[0].values.filter((v) => v !== null) as number[]))).toBe(fullMax);
		const zoom = buildChartData(series!, { channels: null, from: 30_000, to: 31_000, maxPoints: 2000 });
		expect(zoom.t[0]).toBe(30_000);
		expect(zoom.t[zoom.t.length - 1]).toBe(31_000);
		expect(zoom.channels).toHaveLength(4);
	});

	describe('bad input: a clear error with the line, nothing stored', () => {
		const cases: { name: string; csv: () => string; map?: CycleLogMappingInput; line: number | null; reason: RegExp }[] = [
			{
				name: 'wrong delimiter',
				csv: () => writeCsvLog(truthSeries, { ...csvOptions, delimiter: ';' }),
				map: { ...goodMapping, delimiter: ',', decimalSeparator: undefined },
				line: 4,
				reason: /delimited by ";"/
			},
			{ name: 'missing column', csv: () => goodCsv, map: { ...goodMapping, channels: [...goodMapping.channels, { column: 'shelf-9', role: 'shelf', unit: 'degC' }] }, line: 4, reason: /column "shelf-9" is not in the header row/ },
			{ name: 'text in a number column', csv: () => withLine(goodCsv, 1234, (c) => [c[0], 'ERR', ...c.slice(2)]), line: 1234, reason: /"ERR" in column "shelf-1" is not a number/ },
			{ name: 'time going backwards', csv: () => withLine(goodCsv, 600, (c) => ['20:00:05', ...c.slice(1)]), line: 600, reason: /goes backwards/ },
			{ name: 'a row cut short', csv: () => withLine(goodCsv, 900, (c) => c.slice(0, 2)), line: 900, reason: /2 field\(s\)/ },
			{ name: 'empty file', csv: () => '', line: null, reason: /empty/ },
			{ name: 'header only', csv: () => goodCsv.split('\r\n').slice(0, 4).join('\r\n'), line: null, reason: /0 data row/ }
		];
		for (const c of cases) {
			it(c.name, async () => {
				const before = { runs: await countRows(t.handle.db, 'cycle_run'), series: await countRows(t.handle.db, 'cycle_series'), audit: await countRows(t.handle.db, 'audit_event') };
				const attempt = importRun(t.handle.db, actor, { equipmentId: dryerId, recipe, batchId: null, stepKey: null }, { fileName: 'bad.csv', bytes: bytes(c.csv()), mapping: mapping(c.map) });
				const err = await attempt.then(() => null, (e: unknown) => e);
				expect(err).toBeInstanceOf(CycleRunError);
				expect((err as CycleRunError).line).toBe(c.line);
				expect((err as CycleRunError).message).toMatch(c.reason);
				if (c.line !== null) expect((err as CycleRunError).message).toMatch(new RegExp(`^line ${c.line}: `));
				expect({ runs: await countRows(t.handle.db, 'cycle_run'), series: await countRows(t.handle.db, 'cycle_series'), audit: await countRows(t.handle.db, 'audit_event') }).toEqual(before);
			});
		}

		it('a file over the size limit (100 MB) is refused before it is read', async () => {
			const before = await countRows(t.handle.db, 'cycle_run');
			const big = new Uint8Array(100 * 1024 * 1024);
			const err = await importRun(t.handle.db, actor, { equipmentId: dryerId, recipe, batchId: null, stepKey: null }, { fileName: 'big.csv', bytes: big, mapping: mapping() }).then(() => null, (e: unknown) => e);
			expect(err).toBeInstanceOf(CycleRunError);
			expect((err as CycleRunError).status).toBe(413);
			expect((err as CycleRunError).message).toMatch(/100\.0 MB; the largest log accepted is 64 MB/);
			expect(await countRows(t.handle.db, 'cycle_run')).toBe(before);
		});

		it('a unit that does not fit the role is refused by the mapping schema', () => {
			const bad = cycleLogMappingSchema.safeParse({ ...goodMapping, channels: [{ column: 'shelf-1', role: 'shelf', unit: 'mbar' }] });
			expect(bad.success).toBe(false);
			expect(bad.error?.issues[0].message).toMatch(/column "shelf-1": role "shelf" is a temperature; unit "mbar" is a pressure unit/);
		});
	});

	describe('into a batch step (21 CFR 211.68(a), 211.160(b)(4))', () => {
		it('takes the recipe from the batch step and refuses a dryer whose instrument is past its calibration due date', async () => {
			const batchId = await createTestBatch(t.handle.db, actor);
			const ok = await importRun(t.handle.db, actor, { equipmentId: dryerId, recipe: null, batchId, stepKey: 'lyo_cycle' }, { fileName: 'cycle.csv', bytes: bytes(goodCsv), mapping: mapping() });
			// The demo recipe (−25 °C ± 2 °C primary hold) differs from the log's, so excursions are reported: the recipe came from the batch.
			expect(ok.analysis.warnings.join(' ')).not.toMatch(/no recipe/);
			// Each excursion event of a run for a batch step raises one automatic deviation.
			expect(ok.analysis.excursions.length).toBeGreaterThan(0);
			expect(ok.deviations.length).toBeGreaterThan(0);
			expect(ok.deviations.length).toBeLessThanOrEqual(ok.analysis.excursions.length);
			expect(ok.deviations[0].number).toMatch(/^DEV-\d{4}-\d{4}$/);
			const { dryer: late, manometer } = await createTestDryer(t.handle.db, actor, 'LYO-T2', '2020-01-31');
			const before = await countRows(t.handle.db, 'cycle_run');
			const err = await importRun(t.handle.db, actor, { equipmentId: late.id, recipe: null, batchId, stepKey: 'lyo_cycle' }, { fileName: 'cycle.csv', bytes: bytes(goodCsv), mapping: mapping() }).then(() => null, (e: unknown) => e);
			expect(err).toBeInstanceOf(CycleRunError);
			expect((err as Error).message).toMatch(/LYO-T2 PI-101 was due for calibration on 2020-01-31/);
			expect(await countRows(t.handle.db, 'cycle_run')).toBe(before);
			expect(manometer.id).not.toBe(manometerId);
		});

		it('refuses an out-of-service dryer for a batch step, a released batch, and a step without a recipe', async () => {
			const batchId = await createTestBatch(t.handle.db, actor);
			const released = await createTestBatch(t.handle.db, actor, 'released');
			const upload = { fileName: 'cycle.csv', bytes: bytes(goodCsv), mapping: mapping() };
			const noRecipe = await importRun(t.handle.db, actor, { equipmentId: dryerId, recipe: null, batchId, stepKey: 'loading' }, upload).then(() => null, (e: unknown) => e);
			expect((noRecipe as Error).message).toMatch(/has no freeze-drying recipe/);
			const done = await importRun(t.handle.db, actor, { equipmentId: dryerId, recipe: null, batchId: released, stepKey: 'lyo_cycle' }, upload).then(() => null, (e: unknown) => e);
			expect((done as Error).message).toMatch(/is released/);
			await runUnitOfWork(t.handle.db, actor, (uow) => changeStatus(uow, dryerId, null, { status: 'out-of-service', reason: 'Door seal replaced' }));
			const out = await importRun(t.handle.db, actor, { equipmentId: dryerId, recipe: null, batchId, stepKey: 'lyo_cycle' }, upload).then(() => null, (e: unknown) => e);
			expect((out as Error).message).toMatch(/LYO-T1 is out of service/);
			await runUnitOfWork(t.handle.db, actor, (uow) => changeStatus(uow, dryerId, null, { status: 'in-service', reason: 'Seal tested' }));
		});
	});
});
