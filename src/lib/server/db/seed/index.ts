import { randomUUID } from 'node:crypto';
import { sql } from 'drizzle-orm';
import type { Database } from '../client';
import { equipment, material, materialLot, setting, user, userRole } from '../schema';
import { runUnitOfWork, type UnitOfWork } from '../../work';
import { systemActor } from '../../audit/ledger';
import { hashPassword } from '../../auth/password';
import { demoEquipment, demoLots, demoMaterials, demoPeople, demoSite } from './scenario';

/** True when no user exists yet: the server seeds the demo only then. */
export async function isDatabaseEmpty(db: Database): Promise<boolean> {
	const result = await db.execute<{ n: number }>(sql`select count(*)::int as n from "user"`);
	return (result as unknown as { rows: { n: number }[] }).rows[0].n === 0;
}

/**
 * Seeds the invented demo scenario in one unit of work, each row audited like any other change.
 * The demo password is documented; it is for evaluation only, never for GMP use.
 */
export async function seedDemo(db: Database, options: { password: string }): Promise<void> {
	const passwordHash = await hashPassword(options.password);
	await runUnitOfWork(db, systemActor, async (uow) => {
		await seedSettings(uow);
		await seedPeople(uow, passwordHash);
		await seedMaterials(uow);
		await seedEquipment(uow);
	});
}

async function seedSettings(uow: UnitOfWork) {
	const value = { company: demoSite.company, site: demoSite.site, name: demoSite.name, demo: true };
	await uow.tx.insert(setting).values({ key: 'site', value });
	await uow.audit({ action: 'setting.create', entityType: 'setting', entityId: 'site', after: value, reason: 'Demo scenario seeded' });
}

async function seedPeople(uow: UnitOfWork, passwordHash: string) {
	for (const person of demoPeople) {
		const id = randomUUID();
		await uow.tx.insert(user).values({
			id,
			username: person.username,
			name: person.name,
			email: person.email,
			passwordHash,
			passwordChangedAt: new Date()
		});
		await uow.tx.insert(userRole).values(person.roles.map((role) => ({ userId: id, role })));
		await uow.audit({
			action: 'user.create',
			entityType: 'user',
			entityId: id,
			after: { username: person.username, name: person.name, email: person.email, roles: person.roles },
			reason: 'Demo scenario seeded'
		});
	}
}

async function seedMaterials(uow: UnitOfWork) {
	const ids = new Map<string, string>();
	for (const m of demoMaterials) {
		const id = randomUUID();
		ids.set(m.code, id);
		await uow.tx.insert(material).values({ id, ...m });
		await uow.audit({ action: 'material.create', entityType: 'material', entityId: id, after: m });
	}
	for (const lot of demoLots) {
		const id = randomUUID();
		const row = { id, materialId: ids.get(lot.material)!, lotNumber: lot.lotNumber, status: lot.status, expiresOn: lot.expiresOn, supplier: lot.supplier };
		await uow.tx.insert(materialLot).values(row);
		await uow.audit({ action: 'material-lot.create', entityType: 'material-lot', entityId: id, after: row });
	}
}

async function seedEquipment(uow: UnitOfWork) {
	for (const e of demoEquipment) {
		const id = randomUUID();
		const row = { id, ...e, properties: { ...e.properties } };
		await uow.tx.insert(equipment).values(row);
		await uow.audit({ action: 'equipment.create', entityType: 'equipment', entityId: id, after: row });
	}
}
