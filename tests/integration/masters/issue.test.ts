import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { and, count, eq } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { batch, signature } from '$lib/server/db/schema';
import { approveMaster, createNewVersion, makeEffective, retireMaster, saveDraft, submitMaster } from '$lib/server/masters/lifecycle';
import { issueBatch } from '$lib/server/masters/issue';
import { getNumberingPattern, setNumberingPattern } from '$lib/server/masters/numbering';
import { findMaster, listMasters } from '$lib/server/masters/query';
import { hashTemplate } from '$lib/domain/template';
import type { ScaledTemplate } from '$lib/domain/template';
import type { Template } from '$lib/schemas/template';
import { databaseKinds } from '../support/databases';
import { auditHead, auditSince, outcomeOf, seededDatabase, signIn, type Person } from './support';

describe.each(databaseKinds)('issuing batch records on %s', (kind) => {
	let t: Awaited<ReturnType<typeof seededDatabase>>;
	let db: Database;
	let author: Person, qa: Person, operator: Person, supervisor: Person;
	let effectiveId: string;
	let supersededId: string;

	beforeAll(async () => {
		t = await seededDatabase(kind);
		db = t.handle.db;
		[author, qa, operator, supervisor] = await Promise.all(['author', 'qa', 'operator', 'supervisor'].map((u) => signIn(db, u)));
		const rows = await listMasters(db, { code: 'TAV-020-LY' });
		effectiveId = rows.find((r) => r.status === 'effective')!.id;
		supersededId = rows.find((r) => r.status === 'superseded')!.id;
	});
	afterAll(async () => t?.dispose());

	// The demo numbers its batches {product}-{yyyy}-{seq:4} in the year of issue (the seed issues
	// TAV-…-0001 for the lyophilised product and TAV-…-0002 for the bulk solution awaiting review).
	const year = new Date().getUTCFullYear();
	const numbered = (n: number) => `TAV-${year}-${String(n).padStart(4, '0')}`;
	const batches = async () => (await db.select({ n: count() }).from(batch))[0].n;
	const issue = async (p: Person, masterRecordId: string, batchSize: number, batchNumber?: string) =>
		issueBatch(db, { user: p.user, session: p.session, masterRecordId, batchSize, batchNumber, credentials: await p.credentials() });

	test('the seeded batch: TAV-<year>-0001 at 12 L, a frozen copy of the effective master, signed "issued" by QA', async () => {
		const [b] = await db.select().from(batch).where(eq(batch.number, numbered(1)));
		const master = (await findMaster(db, effectiveId))!;
		// (Its status is the execution seed's business: the demo goes on to execute it.)
		expect([b.masterRecordId, b.batchSize, b.batchSizeUnit, b.issuedBy]).toEqual([effectiveId, 12, 'L', qa.user.id]);
		// 21 CFR 211.188(a): an accurate copy of the master, checked by its hash.
		expect(b.snapshot).toEqual(master.template);
		expect(b.snapshotHash).toBe(master.templateHash);
		const sigs = await db.select().from(signature).where(and(eq(signature.entityType, 'batch'), eq(signature.entityId, b.id)));
		expect(sigs.map((s) => `${s.meaning}:${s.printedName}`)).toEqual(['issued:Priya Halden']);
	});

	test('QA issues the effective version with the next number; quantities scaled by the formulas', async () => {
		const head = await auditHead(db);
		const { batchId, number } = await issue(qa, effectiveId, 10);
		expect(number).toBe(numbered(3));
		const [b] = await db.select().from(batch).where(eq(batch.id, batchId));
		const scaled = b.scaled as ScaledTemplate;
		// Hand calculation from the demo formulas: 10 L × 50 mg/mL = 500 g sucrose; 10 L × 0.78 mg/mL = 7.80 g
		// L-histidine; theoretical yield 10 909 vials × 10/12 = 9 090.83 vials.
		expect(scaled.ratio).toBeCloseTo(10 / 12, 12);
		expect(scaled.calculations.sucrose_qty).toMatchObject({ reported: 500, value: { unit: 'g' } });
		expect(scaled.calculations.histidine_qty).toMatchObject({ reported: 7.8 });
		expect(scaled.theoreticalYield.value).toBeCloseTo(9090.833333, 5);
		// ±0.5 % of 500 g, tightened to 1 decimal (limits.ts): 497.5 … 502.5 g.
		expect(scaled.bounds.sucrose_weighed.limits).toEqual({ min: 497.5, max: 502.5, target: 500 });
		expect(scaled.materials.find((m) => m.itemCode === 'EXC-0101')?.quantity).toEqual({ value: 500, unit: 'g' });
		const events = await auditSince(db, head);
		expect(events.map((e) => e.action)).toEqual(['signature.sign', 'batch.issue']);
		expect(events[1].batchId).toBe(batchId);
	});

	// 11.10(g): only QA issues (design.md, roles).
	test('only QA issues a batch record', async () => {
		for (const p of [author, operator, supervisor]) expect(await outcomeOf(issue(p, effectiveId, 12)), p.user.username).toBe('403 forbidden');
	});

	test('a non-effective version, a duplicate number or a size out of range is refused and nothing changes', async () => {
		const n = await batches();
		const head = await auditHead(db);
		expect(await outcomeOf(issue(qa, supersededId, 12))).toBe('409 wrong-state');
		expect(await outcomeOf(issue(qa, effectiveId, 12, numbered(1)))).toBe('409 duplicate-number');
		expect(await outcomeOf(issue(qa, effectiveId, 20))).toBe('400 invalid');
		expect(await outcomeOf(issue(qa, effectiveId, 12, 'no spaces please'))).toBe('400 invalid');
		expect(await outcomeOf(issue(qa, 'no-such-master', 12))).toBe('404 not-found');
		expect(await batches()).toBe(n);
		expect(await auditSince(db, head)).toHaveLength(0);
		// A wrong password: nothing issued (the failed attempt is audited by the ceremony, 11.300(d)).
		const wrong = issueBatch(db, { user: qa.user, session: qa.session, masterRecordId: effectiveId, batchSize: 12, credentials: { method: 'password', username: 'qa', password: 'not-it-at-all' } });
		expect(await outcomeOf(wrong)).toBe('401 bad-credentials');
		expect(await batches()).toBe(n);
	});

	test('two batches issued at once get different numbers', async () => {
		const [a, b] = await Promise.all([issue(qa, effectiveId, 12), issue(qa, effectiveId, 12)]);
		expect(a.number).not.toBe(b.number);
		expect([a.number, b.number].sort()).toEqual([numbered(4), numbered(5)]);
	});

	test('the issued snapshot stays as it was after the master moves on; the superseded version is never issued again', async () => {
		const { batchId } = await issue(qa, effectiveId, 12);
		const [before] = await db.select().from(batch).where(eq(batch.id, batchId));
		const v3 = await createNewVersion(db, author.user, effectiveId);
		const draft = (await findMaster(db, v3.id))!;
		const changed = structuredClone(draft.template) as Template;
		const sucrose = changed.sections[0].steps[0].fields[0];
		if (sucrose.kind !== 'calculated') throw new Error('fixture changed');
		sucrose.formula = 'batch_size * 55 mg/mL';
		await saveDraft(db, author.user, v3.id, { template: changed, revision: draft.revision });
		await submitMaster(db, { ...author, id: v3.id, credentials: await author.credentials() });
		await approveMaster(db, { ...qa, id: v3.id, credentials: await qa.credentials() });
		await makeEffective(db, qa.user, v3.id);
		const [after] = await db.select().from(batch).where(eq(batch.id, batchId));
		expect(after.snapshot).toEqual(before.snapshot);
		expect(after.snapshotHash).toBe(before.snapshotHash);
		expect(hashTemplate(after.snapshot as Template)).toBe(before.snapshotHash);
		expect((after.scaled as ScaledTemplate).calculations.sucrose_qty.ok && (after.scaled as { calculations: { sucrose_qty: { reported: number } } }).calculations.sucrose_qty.reported).toBe(600);
		expect(await outcomeOf(issue(qa, effectiveId, 12))).toBe('409 wrong-state');
		const fresh = await issue(qa, v3.id, 12);
		const [b3] = await db.select().from(batch).where(eq(batch.id, fresh.batchId));
		// 12 L × 55 mg/mL = 660 g.
		expect((b3.scaled as { calculations: { sucrose_qty: { reported: number } } }).calculations.sucrose_qty.reported).toBe(660);
		await retireMaster(db, qa.user, v3.id, 'Replaced by a new product code');
		expect(await outcomeOf(issue(qa, v3.id, 12))).toBe('409 wrong-state');
	});

	test('the numbering pattern is a QA setting, checked and audited', async () => {
		expect(await getNumberingPattern(db)).toBe('{product}-{yyyy}-{seq:4}');
		expect(await outcomeOf(setNumberingPattern(db, author.user, 'L{yy}{seq:3}', 'site SOP'))).toBe('403 forbidden');
		expect(await outcomeOf(setNumberingPattern(db, qa.user, 'L{yy}-{batch}', 'site SOP'))).toBe('400 invalid');
		expect(await outcomeOf(setNumberingPattern(db, qa.user, 'L{yy}{seq:3}', ''))).toBe('400 reason-required');
		const head = await auditHead(db);
		await setNumberingPattern(db, qa.user, 'L{yy}{seq:3}', 'Site SOP QA-017 rev. 4');
		const [event] = await auditSince(db, head);
		expect([event.action, event.entityId, event.after, event.reason]).toEqual(['setting.create', 'batch-numbering', { pattern: 'L{yy}{seq:3}' }, 'Site SOP QA-017 rev. 4']);
		// The master issued last was retired; make a fresh version effective to issue under the new format.
		const latest = (await listMasters(db, { code: 'TAV-020-LY' }))[0];
		const v = await createNewVersion(db, author.user, latest.id);
		await submitMaster(db, { ...author, id: v.id, credentials: await author.credentials() });
		await approveMaster(db, { ...qa, id: v.id, credentials: await qa.credentials() });
		await makeEffective(db, qa.user, v.id);
		expect((await issue(qa, v.id, 12)).number).toBe('L26001');
		expect((await issue(qa, v.id, 12)).number).toBe('L26002');
	});
});
