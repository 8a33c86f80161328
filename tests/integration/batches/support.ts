import { randomUUID } from 'node:crypto';
import { eq } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { batch, equipment, material, materialLot, masterRecord, session as sessionTable } from '$lib/server/db/schema';
import { runUnitOfWork } from '$lib/server/work';
import { systemActor } from '$lib/server/audit/ledger';
import { createUserSession, validateSessionToken } from '$lib/server/auth/session';
import type { SessionInfo, SessionUser } from '$lib/server/auth/types';
import { demoTemplate } from '$lib/domain/fixtures/demo-template';
import { hashTemplate, scaleTemplate } from '$lib/domain/template';
import { dateInZone } from '$lib/domain/time';
import type { Template } from '$lib/schemas/template';
import { DEMO_PASSWORD, seededDatabase, sessionUser } from '../auth/support/identity';

export { DEMO_PASSWORD, seededDatabase, sessionUser };

/** A date `days` from today (UTC, the test site's zone), so the fixtures never age. */
export function dayFromToday(days: number): string {
	return dateInZone(new Date(Date.now() + days * 86_400_000), 'UTC');
}

/**
 * Invented lots and instruments for the checks at entry, dated relative to today: one of each
 * kind of refusal (quarantine, expired, wrong item; out of service, calibration overdue,
 * cleaning due) beside good ones.
 */
export async function addFixtureInventory(db: Database): Promise<void> {
	await runUnitOfWork(db, systemActor, async (uow) => {
		const items = await uow.tx.select().from(material);
		const id = (code: string) => items.find((m) => m.code === code)!.id;
		const lots = [
			['EXC-0101', 'T-SUC-OK', 'released', dayFromToday(365)],
			['EXC-0101', 'T-SUC-QUAR', 'quarantine', dayFromToday(365)],
			['EXC-0101', 'T-SUC-EXP', 'released', dayFromToday(-1)],
			['EXC-0101', 'T-SUC-TODAY', 'released', dayFromToday(0)],
			['EXC-0102', 'T-HIS-OK', 'released', dayFromToday(365)],
			['EXC-0103', 'T-HHC-OK', 'released', dayFromToday(365)],
			['EXC-0104', 'T-PS80-OK', 'released', dayFromToday(365)],
			['API-2001', 'T-DS-OK', 'released', dayFromToday(365)]
		] as const;
		for (const [item, lotNumber, status, expiresOn] of lots) {
			await uow.tx.insert(materialLot).values({ id: randomUUID(), materialId: id(item), lotNumber, status, expiresOn, supplier: 'Test supplier (invented)' });
		}
		const kit = [
			['T-BAL6-OK', 'balance-6kg', 'in-service', dayFromToday(180)],
			['T-BAL6-OOS', 'balance-6kg', 'out-of-service', dayFromToday(180)],
			['T-BAL6-CAL', 'balance-6kg', 'in-service', dayFromToday(-1)],
			['T-BAL6-DIRTY', 'balance-6kg', 'cleaning-due', dayFromToday(180)],
			['T-BAL220-OK', 'balance-220g', 'in-service', dayFromToday(180)],
			['T-COLD-OK', 'cold-room', 'in-service', dayFromToday(180)],
			['T-VSL-OK', 'vessel-20l', 'in-service', dayFromToday(180)],
			['T-PH-OK', 'ph-meter', 'in-service', dayFromToday(30)],
			['T-DNS-OK', 'density-meter', 'in-service', dayFromToday(180)],
			['T-SCL-OK', 'floor-scale-60kg', 'in-service', dayFromToday(180)]
		] as const;
		for (const [code, cls, status, due] of kit) {
			await uow.tx.insert(equipment).values({ id: randomUUID(), code, name: `Test ${code}`, class: cls, location: 'Test room', status, calibratedOn: dayFromToday(-30), calibrationDueOn: due, properties: {} });
		}
		await uow.audit({ action: 'test.fixture', entityType: 'test', after: { lots: lots.length, equipment: kit.length } });
	});
}

/** A fresh batch of the demo template (12 L), inserted as issuance would (frozen snapshot, hash, scaled). */
export async function insertBatch(db: Database, options: { template?: Template; number?: string } = {}): Promise<string> {
	const template = options.template ?? demoTemplate;
	const scaled = scaleTemplate(template, { value: 12, unit: 'L' });
	if (!scaled.ok) throw new Error('the fixture template does not scale');
	const batchId = randomUUID();
	await runUnitOfWork(db, systemActor, async (uow) => {
		const masterId = randomUUID();
		await uow.tx.insert(masterRecord).values({ id: masterId, code: `T-${masterId.slice(0, 8)}`, version: 1, product: template.header.productName, status: 'effective', template, templateHash: hashTemplate(template) });
		await uow.tx.insert(batch).values({
			id: batchId,
			number: options.number ?? `TB-${batchId.slice(0, 8)}`,
			masterRecordId: masterId,
			status: 'issued',
			batchSize: 12,
			batchSizeUnit: 'L',
			snapshot: template,
			snapshotHash: hashTemplate(template),
			scaled: scaled.scaled
		});
		await uow.audit({ action: 'test.batch', entityType: 'batch', entityId: batchId, batchId });
	});
	return batchId;
}

export interface Person {
	user: SessionUser;
	session: SessionInfo;
}

export async function personOf(db: Database, username: string): Promise<Person> {
	const user = await sessionUser(db, username);
	const { token } = await createUserSession(db, user.id, 'password');
	const v = await validateSessionToken(db, token);
	if ('end' in v) throw new Error('session did not validate');
	return { user, session: v.session };
}

/** The session as it stands now (after a first signing only the password is asked). */
export async function refresh(db: Database, p: Person): Promise<Person> {
	const [row] = await db.select().from(sessionTable).where(eq(sessionTable.id, p.session.id));
	return { ...p, session: { ...p.session, firstSignedAt: row.firstSignedAt } };
}

export function credentialsOf(p: Person) {
	return { method: 'password' as const, username: p.user.username, password: DEMO_PASSWORD };
}
