import { desc } from 'drizzle-orm';
import type { Database } from '../client';
import { batch } from '../schema';
import type { UnitOfWork } from '../../work';
import { addInstrument } from '../../equipment/registry';
import { saveMapping } from '../../cycles/mappings';
import { importRun } from '../../cycles/runs';
import { findStepRecipe } from '../../cycles/recipe-source';
import { buildSyntheticCycle, writeCsvLog } from '$lib/domain/lyo/synthetic';
import { demoTemplate } from '$lib/domain/fixtures/demo-template';
import type { CycleLogMapping } from '$lib/domain/lyo/mapping';
import type { SeedContext } from './index';

/** Instruments of the two demo lyophilizers (invented tags); LYO-02's Pirani is overdue on purpose. */
const demoInstruments: Record<string, { tag: string; name: string; role: 'shelf' | 'product' | 'condenser' | 'manometer' | 'pirani'; calibratedOn: string; calibrationDueOn: string }[]> = {
	'LYO-01': [
		{ tag: 'TT-101', name: 'Shelf fluid inlet', role: 'shelf', calibratedOn: '2026-06-10', calibrationDueOn: '2027-06-10' },
		{ tag: 'TT-102', name: 'Shelf fluid outlet', role: 'shelf', calibratedOn: '2026-06-10', calibrationDueOn: '2027-06-10' },
		{ tag: 'TT-111', name: 'Product probe 1 (front, shelf 3)', role: 'product', calibratedOn: '2026-06-10', calibrationDueOn: '2027-06-10' },
		{ tag: 'TT-112', name: 'Product probe 2 (centre, shelf 5)', role: 'product', calibratedOn: '2026-06-10', calibrationDueOn: '2027-06-10' },
		{ tag: 'TT-113', name: 'Product probe 3 (back, shelf 7)', role: 'product', calibratedOn: '2026-06-10', calibrationDueOn: '2027-06-10' },
		{ tag: 'TT-114', name: 'Product probe 4 (edge, shelf 9)', role: 'product', calibratedOn: '2026-06-10', calibrationDueOn: '2027-06-10' },
		{ tag: 'TT-131', name: 'Condenser', role: 'condenser', calibratedOn: '2026-06-10', calibrationDueOn: '2027-06-10' },
		{ tag: 'PT-141', name: 'Capacitance manometer (chamber)', role: 'manometer', calibratedOn: '2026-06-12', calibrationDueOn: '2027-06-12' },
		{ tag: 'PT-142', name: 'Pirani gauge (chamber)', role: 'pirani', calibratedOn: '2026-06-12', calibrationDueOn: '2027-06-12' }
	],
	'LYO-02': [
		{ tag: 'TT-201', name: 'Shelf fluid inlet', role: 'shelf', calibratedOn: '2026-03-02', calibrationDueOn: '2027-03-02' },
		{ tag: 'TT-211', name: 'Product probe 1', role: 'product', calibratedOn: '2026-03-02', calibrationDueOn: '2027-03-02' },
		{ tag: 'PT-241', name: 'Capacitance manometer (chamber)', role: 'manometer', calibratedOn: '2026-03-02', calibrationDueOn: '2027-03-02' },
		{ tag: 'PT-242', name: 'Pirani gauge (chamber)', role: 'pirani', calibratedOn: '2025-09-01', calibrationDueOn: '2026-09-01' }
	]
};

/** The logger layout of LYO-01's export (invented): a title block, clock time, mbar, 999.9 for an empty probe. */
const lyo01Mapping: CycleLogMapping = {
	headerRow: 4,
	time: { column: 'Time', format: 'clock', start: '2026-12-14' },
	channels: [
		{ column: 'shelf-1', role: 'shelf', unit: 'degC' },
		{ column: 'shelf-2', role: 'shelf', unit: 'degC' },
		{ column: 'product-1', role: 'product', unit: 'degC' },
		{ column: 'product-2', role: 'product', unit: 'degC' },
		{ column: 'product-3', role: 'product', unit: 'degC' },
		{ column: 'product-4', role: 'product', unit: 'degC' },
		{ column: 'cm', role: 'manometer', unit: 'mbar' },
		{ column: 'pirani', role: 'pirani', unit: 'mbar' },
		{ column: 'sp-shelf', role: 'setpoint-shelf', unit: 'degC' },
		{ column: 'sp-pressure', role: 'setpoint-pressure', unit: 'mbar' },
		{ column: 'condenser', role: 'condenser', unit: 'degC' }
	],
	placeholders: [999.9]
};

/**
 * The demo cycle: an invented 55 h log of the demo recipe on LYO-01 at 30 s, with one shelf
 * temperature excursion (+4 °C for 40 min in the primary-drying hold), imported through the
 * same path as an upload into the demo batch's freeze-drying step, which raises its deviation.
 */
export async function seedCycles(uow: UnitOfWork, context: SeedContext): Promise<void> {
	for (const [code, list] of Object.entries(demoInstruments)) {
		const equipmentId = context.equipment.get(code);
		if (!equipmentId) continue;
		for (const i of list) await addInstrument(uow, equipmentId, { ...i, reason: 'Demo scenario seeded' });
	}
	const lyo01 = context.equipment.get('LYO-01');
	if (!lyo01) return;
	await saveMapping(uow, lyo01, { name: 'Data export, 30 s', mapping: lyo01Mapping });

	const db = uow.tx as unknown as Database;
	const [demo] = await db.select({ id: batch.id, snapshot: batch.snapshot, status: batch.status }).from(batch).orderBy(desc(batch.issuedAt)).limit(1);
	const recipe = findStepRecipe(demo?.snapshot ?? demoTemplate, 'lyo_cycle');
	if (!recipe) return;
	// Demo recipe plan: primary drying from 3.3 h to 44.5 h (hold at −25 °C ± 2 °C), secondary to 55.2 h.
	const { series } = buildSyntheticCycle({
		recipe,
		sampleS: 30,
		seed: 2026,
		wide: true,
		shelfLagS: 240,
		endpoint: { midpointS: 36 * 3600, tauS: 4000 },
		shelfExcursions: [{ startS: 20 * 3600, endS: 20 * 3600 + 40 * 60, amount: 4 }],
		gaps: [{ role: 'product', startS: 30 * 3600, endS: 30 * 3600 + 15 * 60 }]
	});
	series.channels = series.channels.filter((c) => c.id !== 'room');
	const csv = writeCsvLog(series, {
		time: 'clock',
		startClockS: 16 * 3600 + 20 * 60,
		preamble: ['Cycle data export (invented demo)', 'Dryer: LYO-01   Batch: see record', ''],
		pressureUnit: 'mbar',
		placeholder: '999.9',
		quirks: true,
		decimals: 2
	});
	const forBatch = demo && (demo.status === 'issued' || demo.status === 'in-progress');
	const operator = context.people.get('operator');
	const actor = operator ? { id: operator.id, name: operator.name } : uow.actor;
	const upload = { fileName: 'LYO-01_cycle_2026-12-14.csv', bytes: new TextEncoder().encode(csv), mapping: lyo01Mapping };
	await importRun(db, actor, { equipmentId: lyo01, recipe: forBatch ? null : recipe, batchId: forBatch ? demo.id : null, stepKey: forBatch ? 'lyo_cycle' : null }, upload, uow);
}
