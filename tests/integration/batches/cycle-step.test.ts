import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createHash, randomUUID } from 'node:crypto';
import { and, eq, sql } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { auditEvent, deviation, equipment, signature, stepEntry } from '$lib/server/db/schema';
import { recordStepEntry, type StepEntryRequest } from '$lib/server/batches/entries';
import { verifyStep } from '$lib/server/batches/verify';
import { ExecutionError } from '$lib/server/batches/errors';
import { loadBatchRecords } from '$lib/server/batches/query';
import { listStepRuns } from '$lib/server/batches/runs';
import { hashContent } from '$lib/server/signatures/ceremony';
import { importRun, readLog } from '$lib/server/cycles/runs';
import { hashSeries } from '$lib/server/cycles/series-store';
import { findStepRecipe } from '$lib/server/cycles/recipe-source';
import { addInstrument } from '$lib/server/equipment/registry';
import { runUnitOfWork } from '$lib/server/work';
import { systemActor } from '$lib/server/audit/ledger';
import { buildSyntheticCycle, writeCsvLog } from '$lib/domain/lyo/synthetic';
import type { CycleLogMapping } from '$lib/domain/lyo/mapping';
import { demoTemplate } from '$lib/domain/fixtures/demo-template';
import type { Template } from '$lib/schemas/template';
import { databaseKinds, type TestDatabase } from '../support/databases';
import { addFixtureInventory, credentialsOf, dayFromToday, insertBatch, personOf, refresh, seededDatabase, type Person } from './support';

/**
 * Issue 7, "Into the batch record": the freeze-drying step of a batch takes the cycle run
 * uploaded for it; the run's excursions raise deviations linked to the run; the operator signs
 * `performed` (the signature binds the run's file and series SHA-256, 21 CFR 11.70) and a
 * supervisor verifies. Equipment at entry counts its instruments (21 CFR 211.68(a); 11.10(h)).
 */

// The demo template with the two freeze-drying steps free of the sequence (so each test reaches
// them without performing the whole record) and the data-log attachment optional.
const template: Template = structuredClone(demoTemplate);
for (const s of template.sections) {
	for (const st of s.steps) {
		if (st.key === 'lyo_cycle' || st.key === 'loading') st.mayRunOutOfOrder = true;
		if (st.key === 'lyo_cycle') for (const f of st.fields) if (f.kind === 'attachment') f.required = false;
	}
}

const mapping: CycleLogMapping = {
	headerRow: 1,
	time: { column: 'Time', format: 'elapsed-seconds' },
	channels: [
		{ column: 'shelf-1', role: 'shelf', unit: 'degC' },
		{ column: 'product-1', role: 'product', unit: 'degC' },
		{ column: 'cm', role: 'manometer', unit: 'Pa' },
		{ column: 'pirani', role: 'pirani', unit: 'Pa' }
	],
	placeholders: []
};

/** A synthetic log of the demo recipe (invented) with one known shelf excursion: +4 °C for 40 min at 20 h. */
function syntheticUpload() {
	const recipe = findStepRecipe(template, 'lyo_cycle')!;
	const { series } = buildSyntheticCycle({ recipe, sampleS: 60, seed: 7, shelfExcursions: [{ startS: 20 * 3600, endS: 20 * 3600 + 40 * 60, amount: 4 }] });
	series.channels = series.channels.filter((c) => mapping.channels.some((m) => m.column === c.id));
	const csv = writeCsvLog(series, { time: 'elapsed-seconds', pressureUnit: 'Pa', decimals: 3 });
	return { fileName: 'T-LYO_cycle.csv', bytes: new TextEncoder().encode(csv), mapping };
}

async function outcome(p: Promise<unknown>): Promise<string> {
	try {
		await p;
		return 'ok';
	} catch (err) {
		if (err instanceof ExecutionError) return `${err.status} ${err.code} ${err.issues.map((i) => i.code).join(',')}`.trim();
		throw err;
	}
}

describe.each(databaseKinds)('the freeze-drying step of a batch on %s', (kind) => {
	let t: TestDatabase;
	let db: Database;
	let operator: Person;
	let supervisor: Person;
	let dryerOk: string;
	let upload: ReturnType<typeof syntheticUpload>;

	beforeAll(async () => {
		t = await seededDatabase(kind);
		db = t.handle.db;
		await addFixtureInventory(db);
		operator = await personOf(db, 'operator');
		supervisor = await personOf(db, 'supervisor');
		upload = syntheticUpload();
		dryerOk = randomUUID();
		const dryerInst = randomUUID();
		await runUnitOfWork(db, systemActor, async (uow) => {
			for (const [id, code] of [[dryerOk, 'T-LYO-OK'], [dryerInst, 'T-LYO-INST']]) {
				await uow.tx.insert(equipment).values({ id, code, name: `Test ${code}`, class: 'lyophilizer', location: 'Test room', status: 'in-service', calibratedOn: dayFromToday(-30), calibrationDueOn: dayFromToday(180), properties: {} });
			}
			// The dryer itself is in calibration; one of its instruments is not.
			await addInstrument(uow, dryerInst, { tag: 'PT-T1', name: 'Pirani gauge (test)', role: 'pirani', calibratedOn: dayFromToday(-400), calibrationDueOn: dayFromToday(-1), reason: 'Test fixture' });
			await addInstrument(uow, dryerOk, { tag: 'PT-T2', name: 'Pirani gauge (test)', role: 'pirani', calibratedOn: dayFromToday(-30), calibrationDueOn: dayFromToday(300), reason: 'Test fixture' });
		});
	}, 120_000);
	afterAll(async () => t?.dispose());

	function enter(who: Person, batchId: string, stepKey: string, values: Record<string, unknown>, extra: Partial<StepEntryRequest> = {}) {
		return recordStepEntry(db, { user: who.user, session: who.session, address: '10.1.0.7', batchId, stepKey, values, credentials: credentialsOf(who), ...extra });
	}
	const entriesOf = async (batchId: string) => (await db.select({ n: sql<number>`count(*)::int` }).from(stepEntry).where(eq(stepEntry.batchId, batchId)))[0].n;
	const uploadFor = (batchId: string, stepKey = 'lyo_cycle') => importRun(db, { id: operator.user.id, name: operator.user.name }, { equipmentId: dryerOk, recipe: null, batchId, stepKey }, upload);

	// 21 CFR 211.68(a), 211.160(b)(4): an instrument past its calibration due date is not used; 11.10(h).
	test('a lyophilizer whose instrument is overdue is refused at entry, naming the instrument; one in calibration is taken', async () => {
		const id = await insertBatch(db, { template });
		const err = await enter(operator, id, 'loading', { freeze_dryer: 'T-LYO-INST', loading_shelf_temperature: '5.0', vials_loaded: '2000' }).catch((e) => e);
		expect(err).toBeInstanceOf(ExecutionError);
		expect(err.issues.map((i: { code: string }) => i.code)).toEqual(['calibration-overdue']);
		expect(err.message).toContain(`T-LYO-INST PT-T1 was due for calibration on ${dayFromToday(-1)}`);
		expect(await entriesOf(id)).toBe(0);
		expect(await outcome(enter(operator, id, 'loading', { freeze_dryer: 'T-LYO-OK', loading_shelf_temperature: '5.0', vials_loaded: '2000' }))).toBe('ok');
		operator = await refresh(db, operator);
	});

	test('without an uploaded run the step is refused with a plain message and nothing is written', async () => {
		const id = await insertBatch(db, { template });
		const err = await enter(operator, id, 'lyo_cycle', { cycle_as_recipe: true }).catch((e) => e);
		expect(err).toBeInstanceOf(ExecutionError);
		expect(err.issues.map((i: { code: string }) => i.code)).toEqual(['no-run']);
		expect(err.message).toContain('no cycle run has been uploaded for this step yet');
		expect(await entriesOf(id)).toBe(0);
	});

	test('the run is recorded in the signed entry with its file and series SHA-256; the supervisor verifies', async () => {
		const id = await insertBatch(db, { template });
		const { runId, deviations } = await uploadFor(id);
		// One excursion made (shelf +4 °C for 40 min, tolerance ±2 °C): one deviation raised by the upload.
		expect(deviations).toHaveLength(1);
		const [dev] = await db.select().from(deviation).where(eq(deviation.id, deviations[0].id));
		// The run id goes to run_id, not entry_id (entry_id names step entries only).
		expect({ runId: dev.runId, entryId: dev.entryId, stepKey: dev.stepKey, kind: dev.kind }).toEqual({ runId, entryId: null, stepKey: 'lyo_cycle', kind: 'cycle-excursion' });

		const r = await enter(operator, id, 'lyo_cycle', { cycle_recipe: runId, cycle_as_recipe: true });
		const [row] = await db.select().from(stepEntry).where(eq(stepEntry.id, r.entryId));
		// Expected hashes computed here from the uploaded bytes and the log as read, independently of the stored row.
		const fileSha256 = createHash('sha256').update(upload.bytes).digest('hex');
		const seriesSha256 = hashSeries(readLog(upload).series);
		expect((row.values as Record<string, unknown>).cycle_recipe).toMatchObject({ kind: 'cycle-run', runId, equipmentCode: 'T-LYO-OK', fileName: upload.fileName, fileSha256, seriesSha256, excursions: 1 });
		const [imported] = await db.select().from(auditEvent).where(and(eq(auditEvent.action, 'cycle-run.import'), eq(auditEvent.entityId, runId)));
		expect((imported.after as { seriesSha256: string }).seriesSha256).toBe(seriesSha256);
		const [sig] = await db.select().from(signature).where(eq(signature.id, row.signatureId));
		const b = (await loadBatchRecords(db, id))!.batch;
		expect(sig.contentHash).toBe(
			hashContent({ batchId: id, batchNumber: b.number, snapshotHash: b.snapshotHash, stepKey: 'lyo_cycle', entryId: row.id, values: row.values, calculations: row.calculations, outOfLimits: [], comment: null, reasonCode: null, supersedes: null, workedAt: new Date(row.workedAt).toISOString() })
		);
		// The step shows the run's excursion with the deviation it raised, and needs attention until QA closes it.
		const records = (await loadBatchRecords(db, id))!;
		const [view] = await listStepRuns(db, { batchId: id, stepKey: 'lyo_cycle', deviations: records.deviations });
		expect(view.excursions).toHaveLength(1);
		expect(view.excursions[0]).toMatchObject({ channel: 'shelf-1', kind: 'above', deviation: { number: deviations[0].number } });
		// Made 40 min long; the recovered duration is within 5 min of it (60 s samples, shelf lag).
		expect(Math.abs(view.excursions[0].durationS - 2400)).toBeLessThan(300);
		expect(view.otherDeviations).toEqual([]);

		supervisor = await refresh(db, supervisor);
		await verifyStep(db, { user: supervisor.user, session: supervisor.session, address: '10.1.0.8', batchId: id, stepKey: 'lyo_cycle', credentials: credentialsOf(supervisor) });
		const after = (await loadBatchRecords(db, id))!;
		expect(after.verifications.map((v) => v.entryId)).toEqual([row.id]);
		operator = await refresh(db, operator);
	}, 120_000);

	test('one run is taken without naming it; two must be chosen; a run of another step or batch is refused', async () => {
		const id = await insertBatch(db, { template });
		const other = await insertBatch(db, { template });
		const { runId: foreign } = await uploadFor(other);
		const { runId: first } = await uploadFor(id);
		expect(await outcome(enter(operator, id, 'lyo_cycle', { cycle_recipe: foreign, cycle_as_recipe: true }))).toBe('400 invalid-values not-entered');
		const r = await enter(operator, id, 'lyo_cycle', { cycle_as_recipe: true });
		const [row] = await db.select().from(stepEntry).where(eq(stepEntry.id, r.entryId));
		expect((row.values as Record<string, { runId?: string }>).cycle_recipe.runId).toBe(first);

		const id2 = await insertBatch(db, { template });
		await uploadFor(id2);
		await uploadFor(id2);
		expect(await outcome(enter(operator, id2, 'lyo_cycle', { cycle_as_recipe: true }))).toBe('400 invalid-values choose-run');
		expect(await outcome(enter(operator, id2, 'lyo_cycle', { cycle_recipe: 42, cycle_as_recipe: true }))).toBe('400 invalid-values wrong-type');
		expect(await entriesOf(id2)).toBe(0);
	}, 180_000);
});
