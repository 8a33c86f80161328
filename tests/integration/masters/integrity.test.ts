import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { randomUUID } from 'node:crypto';
import { and, eq, sql } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { masterRecord, signature } from '$lib/server/db/schema';
import { approveMaster, createMaster, returnMaster, saveDraft, submitMaster } from '$lib/server/masters/lifecycle';
import { findMaster, getMasterDetail, listMasters } from '$lib/server/masters/query';
import { hashTemplate } from '$lib/domain/template';
import { statusChanges, type MasterStatus } from '$lib/domain/master-lifecycle';
import { demoTemplate, demoTemplateInput } from '$lib/domain/fixtures/demo-template';
import type { Template, TemplateInput } from '$lib/schemas/template';
import { databaseKinds } from '../support/databases';
import { auditHead, auditSince, outcomeOf, seededDatabase, signIn, type Person } from './support';

/** The demo template under another (invented) product code. */
function productTemplate(code: string): TemplateInput {
	const t = structuredClone(demoTemplateInput) as TemplateInput;
	t.header.productCode = code;
	t.header.productName = `Test product ${code}`;
	t.header.version = 1;
	return t;
}

const statuses: MasterStatus[] = ['draft', 'in-review', 'approved', 'effective', 'superseded', 'retired'];

/**
 * Someone with database access changes a version's content behind the services' back: the
 * freeze trigger (0006) is switched off for that one transaction, as an attacker owning the
 * database could do. What must then catch it is the hash and the signatures' binding (11.10(a), 11.70).
 */
async function tamperStrength(db: Database, id: string, strength: string, alsoHash: boolean): Promise<void> {
	await db.transaction(async (tx) => {
		await tx.execute(sql`alter table master_record disable trigger master_record_frozen`);
		await tx.execute(sql`update master_record set template = jsonb_set(template, '{header,strength}', to_jsonb(${strength}::text)) where id = ${id}`);
		if (alsoHash) {
			const [row] = await tx.select().from(masterRecord).where(eq(masterRecord.id, id));
			await tx.update(masterRecord).set({ templateHash: hashTemplate(row.template as Template) }).where(eq(masterRecord.id, id));
		}
		await tx.execute(sql`alter table master_record enable trigger master_record_frozen`);
	});
}

describe.each(databaseKinds)('master record integrity on %s', (kind) => {
	let t: Awaited<ReturnType<typeof seededDatabase>>;
	let db: Database;
	let author: Person, qa: Person;
	const sign = (p: Person) => p.credentials();
	const signaturesOf = (id: string) => db.select().from(signature).where(and(eq(signature.entityType, 'master-record'), eq(signature.entityId, id)));

	beforeAll(async () => {
		t = await seededDatabase(kind);
		db = t.handle.db;
		[author, qa] = await Promise.all(['author', 'qa'].map((u) => signIn(db, u)));
	});
	afterAll(async () => t?.dispose());

	// Review finding 3; 21 CFR 11.70: a signature binds the stored hash, so it must be the content's hash.
	test('submit refuses a draft whose stored content no longer matches its hash: nothing is signed', async () => {
		const { id } = await createMaster(db, author.user, productTemplate('INT-100'));
		// While a draft, the freeze trigger allows content changes; a raw update leaves the hash stale.
		await db.execute(sql`update master_record set template = jsonb_set(template, '{header,strength}', '"99 mg"') where id = ${id}`);
		const head = await auditHead(db);
		expect(await outcomeOf(submitMaster(db, { ...author, id, credentials: await sign(author) }))).toBe('409 integrity');
		expect((await findMaster(db, id))!.status).toBe('draft');
		expect(await signaturesOf(id)).toHaveLength(0);
		expect((await auditSince(db, head)).filter((e) => e.entityId === id)).toHaveLength(0);
	});

	// Review finding 3: the same under approval.
	test('approve refuses a version in review whose content was changed behind the freeze trigger', async () => {
		const { id } = await createMaster(db, author.user, productTemplate('INT-200'));
		await submitMaster(db, { ...author, id, credentials: await sign(author) });
		await tamperStrength(db, id, '98 mg', false);
		expect(await outcomeOf(approveMaster(db, { ...qa, id, credentials: await sign(qa) }))).toBe('409 integrity');
		expect((await findMaster(db, id))!.status).toBe('in-review');
		expect((await signaturesOf(id)).map((s) => s.meaning)).toEqual(['authored']);
	});

	// Review finding 2; 11.70: each master signature is checked against the content rebuilt from the row.
	test('the detail shows each signature bound, and unbound once the signed content is gone', async () => {
		// The seed's effective version: both signatures still bind it.
		const [effective] = await listMasters(db, { code: 'TAV-020-LY', status: 'effective' });
		const seeded = (await getMasterDetail(db, effective.id))!;
		expect(seeded.signatures.map((s) => [s.meaning, s.bound])).toEqual([['authored', true], ['approved', true]]);

		// Signed, sent back and edited: the "authored" signature was made on other content.
		const { id } = await createMaster(db, author.user, productTemplate('INT-300'));
		await submitMaster(db, { ...author, id, credentials: await sign(author) });
		expect((await getMasterDetail(db, id))!.signatures.map((s) => s.bound)).toEqual([true]);
		await returnMaster(db, qa.user, id, 'Strength to be confirmed by development');
		const edited = productTemplate('INT-300');
		edited.header.strength = '25 mg';
		await saveDraft(db, author.user, id, { template: edited, revision: (await findMaster(db, id))!.revision });
		expect((await getMasterDetail(db, id))!.signatures.map((s) => s.bound)).toEqual([false]);

		// Content and hash both rewritten in the database: the hash check passes, the signatures do not.
		const { id: other } = await createMaster(db, author.user, productTemplate('INT-310'));
		await submitMaster(db, { ...author, id: other, credentials: await sign(author) });
		await approveMaster(db, { ...qa, id: other, credentials: await sign(qa) });
		await tamperStrength(db, other, '97 mg', true);
		const detail = (await getMasterDetail(db, other))!;
		expect(hashTemplate(detail.template)).toBe(detail.templateHash);
		expect(detail.signatures.map((s) => [s.meaning, s.bound])).toEqual([['authored', false], ['approved', false]]);
	});

	// Review finding 38: the detail carries who counts as an author, so the page needs no second read.
	test('the detail names every author id: creator, editors and submitter', async () => {
		const { id } = await createMaster(db, author.user, productTemplate('INT-400'));
		const detail = (await getMasterDetail(db, id))!;
		expect(detail.authorIds).toEqual([author.user.id]);
		expect(detail.authors.map((a) => a.name)).toEqual(['Maren Oakhurst']);
	});

	// Review finding 46; 11.10(f): the database allows only the lifecycle's changes of status
	// (design.md lifecycle; master-lifecycle.ts `lifecycle`), so effective → draft is refused.
	test('the status trigger allows exactly the lifecycle transitions', async () => {
		// The lifecycle written out by hand from design.md, not derived from the code under test.
		const expected = [
			'draft→in-review',
			'in-review→draft',
			'in-review→approved',
			'approved→effective',
			'approved→retired',
			'effective→superseded',
			'effective→retired',
			'superseded→retired'
		];
		expect(statusChanges.map(([f, to]) => `${f}→${to}`).sort()).toEqual([...expected].sort());
		const outcomes: string[] = [];
		for (const from of statuses) {
			for (const to of statuses) {
				if (from === to) continue;
				const id = randomUUID();
				// Inserted straight into the table in its starting state (inserts are not checked).
				await db.insert(masterRecord).values({ id, code: `TRN-${id.slice(0, 8)}`, version: 1, product: 'Invented product', status: from, template: demoTemplate, templateHash: hashTemplate(demoTemplate) });
				const ok = await db.execute(sql`update master_record set status = ${to} where id = ${id}`).then(
					() => true,
					() => false
				);
				if (ok) outcomes.push(`${from}→${to}`);
				expect((await findMaster(db, id))!.status).toBe(ok ? to : from);
			}
		}
		expect(outcomes.sort()).toEqual([...expected].sort());
	});
});
