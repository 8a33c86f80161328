import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { count } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { masterRecord } from '$lib/server/db/schema';
import { importMaster } from '$lib/server/masters/lifecycle';
import { findMaster, listMasters } from '$lib/server/masters/query';
import { MasterError } from '$lib/server/masters/errors';
import { exportTemplate, importTemplate } from '$lib/domain/template';
import type { Template } from '$lib/schemas/template';
import { demoTemplateInput } from '$lib/domain/fixtures/demo-template';
import { createTestDatabase, databaseKinds, type TestDatabase } from '../support/databases';
import { randomUUID } from 'node:crypto';
import { user, userRole } from '$lib/server/db/schema';
import { runUnitOfWork } from '$lib/server/work';
import { systemActor } from '$lib/server/audit/ledger';
import type { SessionUser } from '$lib/server/auth/types';
import { auditHead, auditSince, seededDatabase, signIn, type Person } from './support';

/** The one author of a site that has no master records yet. */
async function addAuthor(db: Database): Promise<SessionUser> {
	const id = randomUUID();
	await runUnitOfWork(db, systemActor, async (uow) => {
		await uow.tx.insert(user).values({ id, username: 'remote-author', name: 'Ines Calloway' });
		await uow.tx.insert(userRole).values({ userId: id, role: 'author' });
		await uow.audit({ action: 'user.create', entityType: 'user', entityId: id, after: { username: 'remote-author', roles: ['author'] } });
	});
	return { id, username: 'remote-author', name: 'Ines Calloway', kind: 'person', roles: ['author'], mustChangePassword: false, locale: 'en' };
}

// Annex 11, 4.8 and 5: data moved between systems keeps its value and meaning and is checked on the way in.
describe.each(databaseKinds)('export and import of master templates on %s', (kind) => {
	let site: Awaited<ReturnType<typeof seededDatabase>>;
	let other: TestDatabase;
	let db: Database;
	let author: Person;

	beforeAll(async () => {
		[site, other] = await Promise.all([seededDatabase(kind), createTestDatabase(kind)]);
		db = site.handle.db;
		author = await signIn(db, 'author');
	});
	afterAll(async () => {
		await site?.dispose();
		await other?.dispose();
	});

	test('export → import into another site gives a draft with the same template hash', async () => {
		const [effective] = await listMasters(db, { code: 'TAV-020-LY', status: 'effective' });
		const row = (await findMaster(db, effective.id))!;
		const file = exportTemplate(row.template as Template);
		const parsed = importTemplate(file);
		if (!parsed.ok) throw new Error('the export did not read back');
		const receiver = await addAuthor(other.handle.db);
		const result = await importMaster(other.handle.db, receiver, parsed.template);
		expect([result.version, result.renumbered]).toEqual([row.version, false]);
		expect(result.templateHash).toBe(row.templateHash);
		// Status is not content (hashTemplate leaves it out): effective at one site, a draft at the other.
		const imported = (await findMaster(other.handle.db, result.id))!;
		expect([imported.status, imported.templateHash]).toEqual(['draft', row.templateHash]);
		expect({ ...(imported.template as Template), header: { ...(imported.template as Template).header, status: 'effective' } }).toEqual(row.template);
	});

	test('the same file imported where the product already has versions becomes the next version', async () => {
		const [effective] = await listMasters(db, { code: 'TAV-020-LY', status: 'effective' });
		const row = (await findMaster(db, effective.id))!;
		const r = await importMaster(db, author.user, row.template);
		expect([r.version, r.renumbered]).toEqual([3, true]);
		// One open version per product: a second import waits for the first to be finished.
		const again = await importMaster(db, author.user, row.template).catch((e: MasterError) => `${e.status} ${e.code}`);
		expect(again).toBe('409 open-version');
	});

	test('an invalid template is refused naming every issue, and nothing is written', async () => {
		const bad = structuredClone(demoTemplateInput) as unknown as {
			header: Record<string, unknown>;
			sections: { key: string; steps: { key: string; fields: Record<string, unknown>[] }[] }[];
		};
		bad.header.productCode = 'BAD-001';
		delete bad.header.strength; // missing field
		const dispense = bad.sections[0].steps[0].fields;
		dispense.push({ kind: 'number', key: 'sucrose_lot', label: 'Duplicate key', unit: 'g', decimals: 1 });
		dispense.push({ kind: 'number', key: 'contradict', label: 'Limits that contradict', unit: 'g', decimals: 1, limits: { kind: 'range', min: 10, max: 5 } });
		dispense.push({ kind: 'calculated', key: 'unparsable', label: 'Does not parse', formula: 'batch_size * (2', unit: 'g', decimals: 1 });
		dispense.push({ kind: 'calculated', key: 'to_nothing', label: 'Refers to nothing', formula: 'no_such_field * 2', unit: 'g', decimals: 1 });
		dispense.push({ kind: 'calculated', key: 'mixed_units', label: 'Mixes units', formula: 'sucrose_qty + 5 mL', unit: 'g', decimals: 1 });
		dispense.push({ kind: 'calculated', key: 'loop_a', label: 'Loop a', formula: 'loop_b + 1 g', unit: 'g', decimals: 1 });
		dispense.push({ kind: 'calculated', key: 'loop_b', label: 'Loop b', formula: 'loop_a + 1 g', unit: 'g', decimals: 1 });
		dispense.push({ kind: 'calculated', key: 'escape', label: 'Sandbox escape', formula: 'sqrt.constructor("return process")', unit: 'g', decimals: 1 });
		const countMasters = async () => (await db.select({ n: count() }).from(masterRecord))[0].n;
		const before = await countMasters();
		const head = await auditHead(db);
		const err = (await importMaster(db, author.user, bad).catch((e) => e)) as MasterError;
		expect(err).toBeInstanceOf(MasterError);
		expect(err.status).toBe(400);
		const codes = err.issues.map((i) => i.code);
		for (const code of ['schema.invalid_type', 'key.duplicate', 'limits.contradict', 'formula.parse', 'formula.unknown-name', 'formula.unit-mismatch', 'formula.cycle', 'formula.not-allowed']) {
			expect(codes, code).toContain(code);
		}
		expect(err.issues.find((i) => i.code === 'schema.invalid_type')?.path).toEqual(['header', 'strength']);
		expect(err.issues.find((i) => i.code === 'formula.unknown-name')?.message).toMatch(/no_such_field/);
		expect(await countMasters()).toBe(before);
		expect(await auditSince(db, head)).toHaveLength(0);
	});
});
