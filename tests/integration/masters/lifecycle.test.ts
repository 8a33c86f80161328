import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { randomUUID } from 'node:crypto';
import { and, eq, sql } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { masterRecord, signature, user, userRole } from '$lib/server/db/schema';
import { runUnitOfWork } from '$lib/server/work';
import { systemActor } from '$lib/server/audit/ledger';
import { hashPassword } from '$lib/server/auth/password';
import {
	approveMaster,
	createMaster,
	createNewVersion,
	makeEffective,
	retireMaster,
	returnMaster,
	saveDraft,
	submitMaster
} from '$lib/server/masters/lifecycle';
import { findMaster, listMasters } from '$lib/server/masters/query';
import { isSignatureBound } from '$lib/server/signatures/query';
import { hashTemplate } from '$lib/domain/template';
import { demoTemplateInput } from '$lib/domain/fixtures/demo-template';
import type { Template, TemplateInput } from '$lib/schemas/template';
import { databaseKinds } from '../support/databases';
import { auditHead, auditSince, DEMO_PASSWORD, outcomeOf, seededDatabase, signIn, type Person } from './support';

/** The demo template under another (invented) product code, so its history starts fresh. */
function productTemplate(code: string): TemplateInput {
	const t = structuredClone(demoTemplateInput) as TemplateInput;
	t.header.productCode = code;
	t.header.productName = `Test product ${code}`;
	t.header.version = 1;
	return t;
}

/** A person who holds both author and QA roles (some sites allow it): the rule must still hold. */
async function addAuthorQa(db: Database): Promise<void> {
	const id = randomUUID();
	const passwordHash = await hashPassword(DEMO_PASSWORD);
	await runUnitOfWork(db, systemActor, async (uow) => {
		await uow.tx.insert(user).values({ id, username: 'dual', name: 'Wren Talbury', passwordHash, passwordChangedAt: new Date() });
		await uow.tx.insert(userRole).values([{ userId: id, role: 'author' }, { userId: id, role: 'qa' }]);
		await uow.audit({ action: 'user.create', entityType: 'user', entityId: id, after: { username: 'dual', roles: ['author', 'qa'] } });
	});
}

describe.each(databaseKinds)('master record lifecycle on %s', (kind) => {
	let t: Awaited<ReturnType<typeof seededDatabase>>;
	let db: Database;
	let author: Person, qa: Person, operator: Person, supervisor: Person, inspector: Person, dual: Person;
	const sign = (p: Person) => p.credentials();

	beforeAll(async () => {
		t = await seededDatabase(kind);
		db = t.handle.db;
		await addAuthorQa(db);
		[author, qa, operator, supervisor, inspector, dual] = await Promise.all(['author', 'qa', 'operator', 'supervisor', 'inspector', 'dual'].map((u) => signIn(db, u)));
	});
	afterAll(async () => t?.dispose());

	const status = async (id: string) => (await findMaster(db, id))!.status;

	// 21 CFR 11.10(d), (g): only authors create master records.
	test('only an author creates a master record; it starts as version 1 draft', async () => {
		for (const p of [qa, operator, supervisor, inspector]) expect(await outcomeOf(createMaster(db, p.user, productTemplate('TST-100'))), p.user.username).toBe('403 forbidden');
		const { id } = await createMaster(db, author.user, productTemplate('TST-100'));
		const row = (await findMaster(db, id))!;
		expect([row.status, row.version, row.code, (row.template as Template).header.status]).toEqual(['draft', 1, 'TST-100', 'draft']);
		expect(row.templateHash).toBe(hashTemplate(row.template as Template));
		// A code that exists is a new version, never a second master.
		expect(await outcomeOf(createMaster(db, author.user, productTemplate('TST-100')))).toBe('409 code-taken');
	});

	test('the whole way: draft → in review (authored) → approved (approved) → effective → superseded by the next version', async () => {
		const { id } = await createMaster(db, author.user, productTemplate('TST-200'));
		const row = (await findMaster(db, id))!;
		const edited = productTemplate('TST-200');
		edited.sections[0].steps[0].title = 'Dispense sucrose (edited)';
		// Only a draft is edited, by an author (11.10(g)).
		expect(await outcomeOf(saveDraft(db, qa.user, id, { template: edited, revision: row.revision }))).toBe('403 forbidden');
		const saved = await saveDraft(db, author.user, id, { template: edited, revision: row.revision });
		expect(saved.changes).toBe(1);
		// Two editors never overwrite each other: the revision read must still be current.
		expect(await outcomeOf(saveDraft(db, author.user, id, { template: edited, revision: row.revision }))).toBe('409 stale');

		// Submit: author only, signed "authored" (211.186(a): written and signed by one person).
		for (const p of [qa, operator, inspector]) expect(await outcomeOf(submitMaster(db, { ...p, id, credentials: await sign(p) })), p.user.username).toBe('403 forbidden');
		expect(await outcomeOf(submitMaster(db, { ...author, id, credentials: { method: 'password', username: 'author', password: 'wrong-password-1' } }))).toBe('401 bad-credentials');
		expect(await status(id)).toBe('draft');
		await submitMaster(db, { ...author, id, credentials: await sign(author) });
		expect(await status(id)).toBe('in-review');

		// In review, nothing changes any more, through the service or behind its back (trigger).
		const inReview = (await findMaster(db, id))!;
		expect(await outcomeOf(saveDraft(db, author.user, id, { template: edited, revision: inReview.revision }))).toBe('409 wrong-state');
		await expect(db.execute(sql`update master_record set template = jsonb_set(template, '{header,strength}', '"99 mg"') where id = ${id}`)).rejects.toThrow();
		await expect(db.execute(sql`delete from master_record where id = ${id}`)).rejects.toThrow();
		expect((await findMaster(db, id))!.templateHash).toBe(inReview.templateHash);

		// Approve: QA only (11.10(g)); an author never approves (211.186(a)).
		for (const p of [author, operator, supervisor, inspector]) expect(await outcomeOf(approveMaster(db, { ...p, id, credentials: await sign(p) })), p.user.username).toBe('403 forbidden');
		await approveMaster(db, { ...qa, id, credentials: await sign(qa) });
		expect(await status(id)).toBe('approved');
		const sigs = await db.select().from(signature).where(and(eq(signature.entityType, 'master-record'), eq(signature.entityId, id)));
		expect(sigs.map((s) => [s.meaning, s.printedName]).sort()).toEqual([['approved', 'Priya Halden'], ['authored', 'Maren Oakhurst']]);
		// 11.70: each signature is bound to the hash of the exact version it signed.
		for (const s of sigs) expect(isSignatureBound(s, { kind: 'master-record', meaning: s.meaning, masterRecordId: id, code: 'TST-200', version: 1, templateHash: inReview.templateHash })).toBe(true);

		// An approved version never changes and is not issued until effective.
		const approved = (await findMaster(db, id))!;
		expect(await outcomeOf(saveDraft(db, author.user, id, { template: edited, revision: approved.revision }))).toBe('409 wrong-state');
		expect(await outcomeOf(submitMaster(db, { ...author, id, credentials: await sign(author) }))).toBe('409 wrong-state');
		expect(await outcomeOf(approveMaster(db, { ...qa, id, credentials: await sign(qa) }))).toBe('409 wrong-state');

		// Make effective: QA only.
		expect(await outcomeOf(makeEffective(db, author.user, id))).toBe('403 forbidden');
		await makeEffective(db, qa.user, id);
		expect(await status(id)).toBe('effective');

		// A new version is a copy of the latest; making it effective supersedes the one before.
		expect(await outcomeOf(createNewVersion(db, qa.user, id))).toBe('403 forbidden');
		const v2 = await createNewVersion(db, author.user, id);
		expect(v2.version).toBe(2);
		const copy = (await findMaster(db, v2.id))!;
		expect({ ...(copy.template as Template), header: { ...(copy.template as Template).header, version: 1, status: 'effective' } }).toEqual((await findMaster(db, id))!.template);
		expect(copy.basedOnId).toBe(id);
		// One open version per product at a time.
		expect(await outcomeOf(createNewVersion(db, author.user, id))).toBe('409 open-version');
		await submitMaster(db, { ...author, id: v2.id, credentials: await sign(author) });
		await approveMaster(db, { ...qa, id: v2.id, credentials: await sign(qa) });
		await makeEffective(db, qa.user, v2.id);
		expect([await status(id), await status(v2.id)]).toEqual(['superseded', 'effective']);
		expect((await listMasters(db, { code: 'TST-200', status: 'effective' })).map((m) => m.version)).toEqual([2]);

		// Retire: QA, with a reason.
		expect(await outcomeOf(retireMaster(db, qa.user, v2.id, ' '))).toBe('400 reason-required');
		expect(await outcomeOf(retireMaster(db, author.user, v2.id, 'withdrawn'))).toBe('403 forbidden');
		await retireMaster(db, qa.user, v2.id, 'Product withdrawn from the market');
		expect(await status(v2.id)).toBe('retired');
		expect(await outcomeOf(makeEffective(db, qa.user, v2.id))).toBe('409 wrong-state');
	});

	// 21 CFR 211.186(a): independently checked by a second person, even one holding both roles.
	test('a person who wrote a version cannot approve it, whatever their roles', async () => {
		const { id } = await createMaster(db, dual.user, productTemplate('TST-300'));
		await submitMaster(db, { ...dual, id, credentials: await sign(dual) });
		const head = await auditHead(db);
		expect(await outcomeOf(approveMaster(db, { ...dual, id, credentials: await sign(dual) }))).toBe('403 own-version');
		expect(await status(id)).toBe('in-review');
		expect(await auditSince(db, head)).toHaveLength(0);
		// An editor of the draft counts as an author too.
		await returnMaster(db, qa.user, id, 'Add the sampling step');
		const row = (await findMaster(db, id))!;
		await saveDraft(db, author.user, id, { template: row.template, revision: row.revision });
		await submitMaster(db, { ...author, id, credentials: await sign(author) });
		const dualAgain = await outcomeOf(approveMaster(db, { ...dual, id, credentials: await sign(dual) }));
		expect(dualAgain).toBe('403 own-version');
		await approveMaster(db, { ...qa, id, credentials: await sign(qa) });
		expect(await status(id)).toBe('approved');
	});

	// 11.10(f): the permitted sequence; Annex 11, 9: the reason is in the audit trail.
	test('a version in review goes back to draft with a reason; an operator cannot send it back', async () => {
		const { id } = await createMaster(db, author.user, productTemplate('TST-400'));
		expect(await outcomeOf(returnMaster(db, qa.user, id, 'too early'))).toBe('409 wrong-state');
		await submitMaster(db, { ...author, id, credentials: await sign(author) });
		expect(await outcomeOf(returnMaster(db, operator.user, id, 'no'))).toBe('403 forbidden');
		expect(await outcomeOf(returnMaster(db, qa.user, id, ''))).toBe('400 reason-required');
		const head = await auditHead(db);
		await returnMaster(db, qa.user, id, 'Limits of the bulk pH need the development report reference');
		expect(await status(id)).toBe('draft');
		const events = await auditSince(db, head);
		expect(events.map((e) => [e.action, e.reason])).toEqual([['master.return', 'Limits of the bulk pH need the development report reference']]);
	});

	test('an invalid draft is refused with its issues and nothing changes', async () => {
		const { id } = await createMaster(db, author.user, productTemplate('TST-500'));
		const before = (await findMaster(db, id))!;
		const bad = productTemplate('TST-500');
		bad.sections[0].steps[0].fields![0] = { kind: 'calculated', key: 'sucrose_qty', label: 'Sucrose', formula: 'batch_size * 50 mg/mL + 1 h', unit: 'g', decimals: 1 };
		const head = await auditHead(db);
		const err = await saveDraft(db, author.user, id, { template: bad, revision: before.revision }).catch((e) => e);
		expect(err.status).toBe(400);
		expect(err.issues.map((i: { code: string }) => i.code)).toContain('formula.unit-mismatch');
		expect((await findMaster(db, id))!.templateHash).toBe(before.templateHash);
		expect(await auditSince(db, head)).toHaveLength(0);
		// The product code is the master's identity: another code is another master.
		const other = productTemplate('TST-501');
		expect(await outcomeOf(saveDraft(db, author.user, id, { template: other, revision: before.revision }))).toBe('400 invalid');
	});

	test('every change of state is audited with before and after', async () => {
		const { id } = await createMaster(db, author.user, productTemplate('TST-600'));
		const head = await auditHead(db);
		await submitMaster(db, { ...author, id, credentials: await sign(author) });
		await approveMaster(db, { ...qa, id, credentials: await sign(qa) });
		await makeEffective(db, qa.user, id);
		const events = (await auditSince(db, head)).filter((e) => e.entityId === id);
		expect(events.map((e) => e.action)).toEqual(['signature.sign', 'master.submit', 'signature.sign', 'master.approve', 'master.make-effective']);
		expect(events.filter((e) => e.action.startsWith('master.')).map((e) => [(e.before as { status: string }).status, (e.after as { status: string }).status])).toEqual([
			['draft', 'in-review'],
			['in-review', 'approved'],
			['approved', 'effective']
		]);
		expect(events.map((e) => e.actorName)).toEqual(['Maren Oakhurst', 'Maren Oakhurst', 'Priya Halden', 'Priya Halden', 'Priya Halden']);
	});

	test('the demo seed is a real master: v1 superseded, v2 effective, each signed authored and approved by two people', async () => {
		const rows = await listMasters(db, { code: 'TAV-020-LY' });
		expect(rows.map((r) => [r.version, r.status])).toEqual([[2, 'effective'], [1, 'superseded']]);
		for (const r of rows) {
			const sigs = await db.select().from(signature).where(and(eq(signature.entityType, 'master-record'), eq(signature.entityId, r.id)));
			expect(sigs.map((s) => `${s.meaning}:${s.printedName}`).sort()).toEqual(['approved:Priya Halden', 'authored:Maren Oakhurst']);
		}
		const [v2] = await db.select().from(masterRecord).where(eq(masterRecord.id, rows[0].id));
		expect(v2.templateHash).toBe(hashTemplate(v2.template as Template));
	});
});
