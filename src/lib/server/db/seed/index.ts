import { randomUUID } from 'node:crypto';
import type { Database } from '../client';
import { material, materialLot, setting, user, userRole } from '../schema';
import { changeStatus, createEquipment } from '../../equipment/registry';
import { runUnitOfWork, type UnitOfWork } from '../../work';
import { systemActor } from '../../audit/ledger';
import { hashPassword } from '../../auth/password';
import { demoEquipment, demoLots, demoMaterials, demoPeople, demoSite } from './scenario';
import { seedMasters } from './masters';
import { seedBatches } from './batches';
import { seedCycles } from './cycles';
import { seedReview } from './review';

/** True when no user exists yet: the server seeds the demo only then. */
export async function isDatabaseEmpty(db: Database): Promise<boolean> {
	const [row] = await db.select({ id: user.id }).from(user).limit(1);
	return row === undefined;
}

/**
 * Seeds the invented demo scenario in one unit of work, each row audited like any other change.
 * The demo password is documented; it is for evaluation only, never for GMP use.
 */
export async function seedDemo(db: Database, options: { password: string }): Promise<void> {
	const passwordHash = await hashPassword(options.password);
	await runUnitOfWork(db, systemActor, async (uow) => {
		const context: SeedContext = { db, password: options.password, people: new Map(), materials: new Map(), lots: new Map(), equipment: new Map() };
		await seedSettings(uow);
		await seedPeople(uow, passwordHash, context);
		await seedMaterials(uow, context);
		await seedEquipment(uow, context);
		// Later areas add their part of the scenario here, each in its own seed/<area>.ts,
		// in the order the work happens: masters, then batches, then cycles.
		for (const seedArea of areaSeeders) await seedArea(uow, context);
	});
}

/** What the area seeders know of the rows seeded before them. */
export interface SeedContext {
	db: Database;
	/** The demo password, for seeders that sign through the real ceremony. */
	password: string;
	people: Map<string, { id: string; name: string }>;
	materials: Map<string, string>;
	lots: Map<string, string>;
	equipment: Map<string, string>;
}

type AreaSeeder = (uow: UnitOfWork, context: SeedContext) => Promise<void>;
const areaSeeders: AreaSeeder[] = [seedMasters, seedBatches, seedCycles, seedReview];

async function seedSettings(uow: UnitOfWork) {
	const value = { company: demoSite.company, site: demoSite.site, name: demoSite.name, demo: true };
	await uow.tx.insert(setting).values({ key: 'site', value });
	await uow.audit({ action: 'setting.create', entityType: 'setting', entityId: 'site', after: value, reason: 'Demo scenario seeded' });
}

async function seedPeople(uow: UnitOfWork, passwordHash: string, context: SeedContext) {
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
		context.people.set(person.username, { id, name: person.name });
		await uow.audit({
			action: 'user.create',
			entityType: 'user',
			entityId: id,
			after: { username: person.username, name: person.name, email: person.email, roles: person.roles },
			reason: 'Demo scenario seeded'
		});
	}
}

async function seedMaterials(uow: UnitOfWork, context: SeedContext) {
	const ids = context.materials;
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
		context.lots.set(lot.lotNumber, id);
		await uow.audit({ action: 'material-lot.create', entityType: 'material-lot', entityId: id, after: row });
	}
}

// Through the registry's own services, so each item's history starts with its "created" event.
async function seedEquipment(uow: UnitOfWork, context: SeedContext) {
	const reason = 'Demo scenario seeded';
	for (const e of demoEquipment) {
		const { status, ...rest } = e;
		const created = await createEquipment(uow, { ...rest, properties: { ...e.properties }, reason });
		if (status !== 'in-service') await changeStatus(uow, created.id, null, { status, reason });
		context.equipment.set(e.code, created.id);
	}
}
