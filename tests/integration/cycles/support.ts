import { randomUUID } from 'node:crypto';
import { createHash } from 'node:crypto';
import { sql } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { batch, masterRecord, user, type BatchStatus } from '$lib/server/db/schema';
import { runUnitOfWork } from '$lib/server/work';
import type { Actor } from '$lib/server/audit/ledger';
import { addInstrument, createEquipment } from '$lib/server/equipment/registry';
import { demoTemplate } from '$lib/domain/fixtures/demo-template';
import { rowsOf } from '$lib/server/audit/ledger';

/** Invented people and equipment for the tests (no real person, site or maker). */
export async function createTestActor(db: Database): Promise<Actor> {
	const id = randomUUID();
	await runUnitOfWork(db, { id: null, name: 'Rimebook system' }, async (uow) => {
		await uow.tx.insert(user).values({ id, username: `op-${id.slice(0, 6)}`, name: 'Ines Frostfield', email: `${id.slice(0, 6)}@example.invalid`, passwordHash: 'x', passwordChangedAt: new Date() });
		await uow.audit({ action: 'user.create', entityType: 'user', entityId: id, after: { name: 'Ines Frostfield' } });
	});
	return { id, name: 'Ines Frostfield' };
}

export async function createTestDryer(db: Database, actor: Actor, code = 'LYO-T1', dueOn = '2099-01-01', leakRateLimitMbarLPerS = 0.02) {
	return runUnitOfWork(db, actor, async (uow) => {
		const dryer = await createEquipment(uow, {
			code,
			name: 'Test lyophilizer',
			class: 'lyophilizer',
			location: 'Test room',
			calibratedOn: '2026-01-01',
			calibrationDueOn: '2099-01-01',
			properties: { shelfAreaM2: 2, chamberVolumeL: 500, condenserCapacityKg: 30, leakRateLimitMbarLPerS },
			reason: 'Test set-up'
		});
		const manometer = await addInstrument(uow, dryer.id, { tag: 'PI-101', name: 'Capacitance manometer', role: 'manometer', calibratedOn: `${Number(dueOn.slice(0, 4)) - 1}${dueOn.slice(4)}`, calibrationDueOn: dueOn, reason: 'Test set-up' });
		return { dryer, manometer };
	});
}

/** A batch of the demo master record, issued straight into the tables (the masters flow is not under test here). */
export async function createTestBatch(db: Database, actor: Actor, status: BatchStatus = 'issued') {
	const masterId = randomUUID();
	const batchId = randomUUID();
	const hash = createHash('sha256').update(JSON.stringify(demoTemplate)).digest('hex');
	await runUnitOfWork(db, actor, async (uow) => {
		await uow.tx.insert(masterRecord).values({ id: masterId, code: `MBR-${masterId.slice(0, 6)}`, version: 1, product: 'Invented product', status: 'effective', template: demoTemplate, templateHash: hash });
		await uow.tx.insert(batch).values({ id: batchId, number: `B-${batchId.slice(0, 6)}`, masterRecordId: masterId, status, batchSize: 1, batchSizeUnit: 'L', snapshot: demoTemplate, snapshotHash: hash });
		await uow.audit({ action: 'batch.issue', entityType: 'batch', entityId: batchId, batchId, after: { test: true } });
	});
	return batchId;
}

export async function countRows(db: Database, table: 'cycle_run' | 'cycle_series' | 'audit_event'): Promise<number> {
	return rowsOf<{ n: number }>(await db.execute(sql.raw(`select count(*)::int as n from ${table}`)))[0].n;
}
