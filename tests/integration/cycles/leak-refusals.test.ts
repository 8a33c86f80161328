/**
 * Refused pressure-rise (leak) tests on every database kind: each refusal of the service has its
 * stable code, and the run page's `leak` action answers `{ code, message }` with the message from
 * the catalogue (cycles.leak.errors) in the person's language, never the service's English
 * (project rule: all UI text through src/lib/i18n). The German wording is the author's own.
 * Dryers, balances, batches and logs are invented.
 */
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { eq } from 'drizzle-orm';
import { createTestDatabase, databaseKinds, type TestDatabase } from '../support/databases';
import { createTestActor, createTestBatch, createTestDryer } from './support';
import { buildSyntheticCycle, writeCsvLog } from '$lib/domain/lyo/synthetic';
import { cycleLogMappingSchema } from '$lib/domain/lyo/mapping';
import { createSucroseRecipe } from '../../unit/lyo/fixtures';
import { batch, leakTest } from '$lib/server/db/schema';
import { runUnitOfWork } from '$lib/server/work';
import { createEquipment } from '$lib/server/equipment/registry';
import { messagesFor, type Locale } from '$lib/i18n';
import type { Actor } from '$lib/server/audit/ledger';
import type { SessionUser } from '$lib/server/auth/types';

let t: TestDatabase;
vi.mock('$lib/server/db', () => ({
	get database() {
		return t.handle;
	}
}));
const { importRun } = await import('$lib/server/cycles/runs');
const { clearSeriesCache } = await import('$lib/server/cycles/series-store');
const { recordLeakTest, recordRunLeakTest } = await import('$lib/server/cycles/leak');
const { actions: runActions } = await import('../../../src/routes/(app)/cycles/[id]/+page.server');

const recipe = createSucroseRecipe();
// Samples every 10 s; an isolation period of 600 s from 50 000 s (as in evidence.test.ts).
const RISE = { startS: 50_000, durationS: 600, slopePaPerS: 0.002 };
const { series: truth } = buildSyntheticCycle({ recipe, sampleS: 10, seed: 12, noise: { pressureRel: 0.002 }, pressureRise: RISE });
const csv = writeCsvLog(truth, { time: 'elapsed-seconds', pressureUnit: 'mbar', placeholder: '999.9' });
const mappingOf = (withManometer: boolean) =>
	cycleLogMappingSchema.parse({
		headerRow: 1,
		time: { column: 'Time', format: 'elapsed-seconds' },
		channels: truth.channels.filter((c) => withManometer || c.role !== 'manometer').map((c) => ({ column: c.id, role: c.role, unit: c.unit === 'Pa' ? 'mbar' : 'degC' })),
		placeholders: [999.9]
	});
const upload = (withManometer = true) => ({ fileName: 'cycle.csv', bytes: new TextEncoder().encode(csv), mapping: mappingOf(withManometer) });
const isolation = { fromS: RISE.startS + 10, toS: RISE.startS + RISE.durationS };

describe.each(databaseKinds)('refused leak tests on %s', (kind) => {
	let actor: Actor;
	let dryerId: string;
	let operator: SessionUser;

	beforeAll(async () => {
		t = await createTestDatabase(kind);
		actor = await createTestActor(t.handle.db);
		dryerId = (await createTestDryer(t.handle.db, actor, 'LYO-R1')).dryer.id;
		operator = { id: actor.id!, username: 'op', name: actor.name, kind: 'person', roles: ['operator'], mustChangePassword: false, locale: 'en' };
	});
	afterAll(async () => {
		clearSeriesCache();
		await t?.dispose();
	});

	/** The run page's `leak` action as the browser posts it (hours from the log start). */
	const submit = (runId: string, locale: Locale, fields: { fromH: string; toH: string }) => {
		const url = new URL(`http://localhost/cycles/${runId}?/leak`);
		const body = new FormData();
		for (const [k, v] of Object.entries(fields)) body.set(k, v);
		return runActions.leak({ url, params: { id: runId }, locals: { user: { ...operator, locale }, session: null, requestId: 'test', locale }, request: new Request(url, { method: 'POST', body }) } as never) as Promise<{ status: number; data: { code: string; message: string } }>;
	};
	const hours = (s: number) => String(s / 3600);

	it('each refusal of the service has its code, status and params', async () => {
		const { runId } = await importRun(t.handle.db, actor, { equipmentId: dryerId, recipe, batchId: null, stepKey: null }, upload());
		const refusal = (p: Promise<unknown>) => p.then(() => null, (e: unknown) => e);
		expect(await refusal(recordRunLeakTest(t.handle.db, actor, 'no-such-run', isolation))).toMatchObject({ name: 'LeakTestError', code: 'run-not-found', status: 404 });
		expect(await refusal(recordRunLeakTest(t.handle.db, actor, runId, { fromS: 100, toS: 50 }))).toMatchObject({ code: 'invalid-window', status: 400 });
		// Two samples 10 s apart in the window: fewer than the three a line fit needs.
		expect(await refusal(recordRunLeakTest(t.handle.db, actor, runId, { fromS: 100, toS: 110 }))).toMatchObject({ code: 'too-few-readings', status: 422 });
		const noManometer = await importRun(t.handle.db, actor, { equipmentId: dryerId, recipe, batchId: null, stepKey: null }, upload(false));
		expect(await refusal(recordRunLeakTest(t.handle.db, actor, noManometer.runId, isolation))).toMatchObject({ code: 'no-manometer', status: 422 });
		const entered = { method: 'entered' as const, deltaPmbar: 0.01, deltaTs: 600 };
		expect(await refusal(runUnitOfWork(t.handle.db, actor, (uow) => recordLeakTest(uow, 'no-such-equipment', entered)))).toMatchObject({ code: 'equipment-not-found', status: 404 });
		const balance = await runUnitOfWork(t.handle.db, actor, (uow) =>
			createEquipment(uow, { code: 'BAL-R1', name: 'Test balance', class: 'balance', location: 'Weighing room', calibratedOn: null, calibrationDueOn: null, properties: {}, reason: 'Test set-up' })
		);
		expect(await refusal(runUnitOfWork(t.handle.db, actor, (uow) => recordLeakTest(uow, balance.id, entered)))).toMatchObject({ code: 'no-leak-properties', status: 409, params: { equipment: 'BAL-R1' } });
		const batchId = await createTestBatch(t.handle.db, actor);
		const onBatch = await importRun(t.handle.db, actor, { equipmentId: dryerId, recipe: null, batchId, stepKey: 'lyo_cycle' }, upload());
		await t.handle.db.update(batch).set({ status: 'rejected' }).where(eq(batch.id, batchId)); // played as QA's rejection
		const [{ number }] = await t.handle.db.select({ number: batch.number }).from(batch).where(eq(batch.id, batchId));
		expect(await refusal(recordRunLeakTest(t.handle.db, actor, onBatch.runId, isolation))).toMatchObject({ code: 'batch-closed', status: 409, params: { batch: number, status: 'rejected' } });
		// Nothing was recorded by any refusal.
		expect(await t.handle.db.select().from(leakTest)).toHaveLength(0);
	});

	it.each(['en', 'de'] as const)('the run page answers a refused test with the catalogue’s words in %s', async (locale) => {
		const words = messagesFor(locale).cycles.leak.errors;
		const { runId } = await importRun(t.handle.db, actor, { equipmentId: dryerId, recipe, batchId: null, stepKey: null }, upload());
		// The action's own check: the end before the start.
		expect(await submit(runId, locale, { fromH: '2', toH: '1' })).toMatchObject({ status: 400, data: { code: 'leak-test.invalid-window', message: words['invalid-window'] } });
		expect(await submit('no-such-run', locale, { fromH: '1', toH: '2' })).toMatchObject({ status: 404, data: { code: 'leak-test.run-not-found', message: words['run-not-found'] } });
		expect(await submit(runId, locale, { fromH: hours(100), toH: hours(110) })).toMatchObject({ status: 400, data: { code: 'leak-test.too-few-readings', message: words['too-few-readings'] } });
		const batchId = await createTestBatch(t.handle.db, actor);
		const onBatch = await importRun(t.handle.db, actor, { equipmentId: dryerId, recipe: null, batchId, stepKey: 'lyo_cycle' }, upload());
		await t.handle.db.update(batch).set({ status: 'released' }).where(eq(batch.id, batchId)); // played as QA's release
		const [{ number }] = await t.handle.db.select({ number: batch.number }).from(batch).where(eq(batch.id, batchId));
		const closed = await submit(onBatch.runId, locale, { fromH: hours(isolation.fromS), toH: hours(isolation.toS) });
		expect(closed.status).toBe(400);
		expect(closed.data.code).toBe('leak-test.batch-closed');
		// The batch status by its label in batches.status ("Released" / "Freigegeben").
		expect(closed.data.message).toBe(
			locale === 'en' ? `Batch ${number} is closed (Released): nothing more can be recorded on its runs.` : `Die Charge ${number} ist abgeschlossen (Freigegeben): zu ihren Läufen kann nichts mehr erfasst werden.`
		);
		// Not the service's English (kept for logs and the JSON API).
		expect(closed.data.message).not.toMatch(/is released; nothing more/);
		// And a good window still records the test.
		expect(await submit(runId, locale, { fromH: hours(isolation.fromS), toH: hours(isolation.toS) })).toEqual({ saved: true });
	});
});
