/**
 * Review round 2, execution side: what signatures bind and how the batch view checks them
 * (findings 1, 2), the frozen batch row (15), the shared version bump (21), and the batch API
 * routes called as SvelteKit calls them: capped bodies and bounded values (8), the proxy-aware
 * client address (18), a malformed x-filename (27), the lookup scoped to its batch (36).
 */
import { afterAll, beforeAll, describe, expect, test, vi } from 'vitest';
import { eq, sql } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { batch, signature, stepEntry, stepVerification } from '$lib/server/db/schema';
import { recordStepEntry } from '$lib/server/batches/entries';
import { verifyStep } from '$lib/server/batches/verify';
import { buildBatchView, loadBatchRecords } from '$lib/server/batches/query';
import { bumpBatchVersion, OPEN_BATCH_STATUSES } from '$lib/server/batches/state';
import { isoInstant } from '$lib/server/batches/signed-content';
import { hashContent } from '$lib/server/signatures/ceremony';
import { runUnitOfWork } from '$lib/server/work';
import { systemActor } from '$lib/server/audit/ledger';
import type { SessionInfo, SessionUser } from '$lib/server/auth/types';
import { databaseKinds, type TestDatabase } from '../support/databases';
import { addFixtureInventory, credentialsOf, DEMO_PASSWORD, insertBatch, personOf, refresh, seededDatabase, type Person } from './support';

let t: TestDatabase;
vi.mock('$lib/server/db', () => ({
	get database() {
		return t.handle;
	}
}));

const { POST: postEntry } = await import('../../../src/routes/api/batches/[id]/steps/[stepKey]/entries/+server');
const { POST: postAttachment } = await import('../../../src/routes/api/batches/[id]/attachments/+server');
const { GET: lookup } = await import('../../../src/routes/api/batches/[id]/lookup/+server');
const { actions: stepActions } = await import('../../../src/routes/(app)/batches/[id]/steps/[stepKey]/+page.server');
const { de } = await import('$lib/i18n/de');

type Handler<E> = (e: E) => Response | Promise<Response>;
/** A RequestEvent as SvelteKit builds it; `getClientAddress` left out on purpose (it throws behind some adapters). */
async function call<E>(handler: Handler<E>, path: string, who: { user: SessionUser; session: SessionInfo | null }, params: Record<string, string>, init?: RequestInit): Promise<Response> {
	const url = new URL(`http://localhost${path}`);
	try {
		return await handler({ url, params, locals: { user: who.user, session: who.session, requestId: 'test', locale: 'en' }, request: new Request(url, init) } as unknown as E);
	} catch (e) {
		const h = e as { status?: number; body?: unknown };
		if (typeof h.status === 'number') return Response.json(h.body, { status: h.status });
		throw e;
	}
}

// Sucrose: 12 L × 50 mg/mL = 600.0 g ± 0.5 % (demo template), as in execution.test.ts.
const goodSucrose = { sucrose_lot: 'T-SUC-OK', sucrose_balance: 'T-BAL6-OK', sucrose_weighed: '600.4' };

describe.each(databaseKinds)('review fixes of batch execution on %s', (kind) => {
	let db: Database;
	let operator: Person;
	let supervisor: Person;

	beforeAll(async () => {
		t = await seededDatabase(kind);
		db = t.handle.db;
		await addFixtureInventory(db);
		operator = await personOf(db, 'operator');
		supervisor = await personOf(db, 'supervisor');
	});
	afterAll(async () => t?.dispose());

	/** An attacker with database access changes a stored value (the append-only trigger lifted for it). */
	async function tamper(entryId: string) {
		await db.execute(sql`ALTER TABLE step_entry DISABLE TRIGGER step_entry_append_only`);
		try {
			await db.execute(sql`UPDATE step_entry SET values = jsonb_set(values, '{sucrose_weighed,value}', '599.9'::jsonb) WHERE id = ${entryId}`);
		} finally {
			await db.execute(sql`ALTER TABLE step_entry ENABLE TRIGGER step_entry_append_only`);
		}
	}

	async function performAndVerify() {
		const id = await insertBatch(db);
		const r = await recordStepEntry(db, { user: operator.user, session: operator.session, address: '10.1.0.1', batchId: id, stepKey: 'weigh_sucrose', values: goodSucrose, comment: 'weighed twice', credentials: credentialsOf(operator) });
		operator = await refresh(db, operator);
		await verifyStep(db, { user: supervisor.user, session: supervisor.session, address: '10.1.0.2', batchId: id, stepKey: 'weigh_sucrose', credentials: credentialsOf(supervisor) });
		supervisor = await refresh(db, supervisor);
		return { id, entryId: r.entryId };
	}

	// Finding 1, 21 CFR 11.70: the "verified" signature binds the whole entry and the "performed" signature on it.
	test('the verified signature binds the entry in full and the performed signature', async () => {
		const { id, entryId } = await performAndVerify();
		const [b] = await db.select().from(batch).where(eq(batch.id, id));
		const [e] = await db.select().from(stepEntry).where(eq(stepEntry.id, entryId));
		const [performed] = await db.select().from(signature).where(eq(signature.id, e.signatureId));
		const [v] = await db.select().from(stepVerification).where(eq(stepVerification.entryId, entryId));
		const [verified] = await db.select().from(signature).where(eq(signature.id, v.signatureId));
		// The content written out by hand here (not with the builder), so a change of the builder fails this.
		const entryContent = {
			batchId: id,
			batchNumber: b.number,
			snapshotHash: b.snapshotHash,
			stepKey: 'weigh_sucrose',
			entryId,
			values: e.values,
			calculations: e.calculations,
			outOfLimits: [],
			comment: 'weighed twice',
			reasonCode: null,
			supersedes: null,
			// timestamptz read back as '2026-… 05:06:07.89+00'; signed as ISO 8601 UTC.
			workedAt: new Date(e.workedAt.replace(' ', 'T').replace(/([+-]\d\d)$/, '$1:00')).toISOString()
		};
		expect(performed.contentHash).toBe(hashContent(entryContent));
		expect(verified.contentHash).toBe(
			hashContent({ kind: 'step-verification', batchId: id, batchNumber: b.number, stepKey: 'weigh_sucrose', entryId, performedSignatureId: performed.id, performedContentHash: performed.contentHash, entry: entryContent })
		);
		// The old, partial binding (values only) is not what is signed any more.
		expect(verified.contentHash).not.toBe(hashContent({ batchId: id, batchNumber: b.number, stepKey: 'weigh_sucrose', entryId, entryValuesHash: hashContent(e.values) }));
	});

	// The timestamptz read back in string mode is normalised to the instant that was signed.
	test('isoInstant reads both the JS and the PostgreSQL form of one instant', () => {
		expect(isoInstant('2026-03-04T05:06:07.890Z')).toBe('2026-03-04T05:06:07.890Z');
		expect(isoInstant('2026-03-04 05:06:07.89+00')).toBe('2026-03-04T05:06:07.890Z');
		expect(isoInstant('2026-03-04 06:06:07.89+01')).toBe('2026-03-04T05:06:07.890Z');
		expect(() => isoInstant('not a time')).toThrow(TypeError);
	});

	// Finding 2, 11.70 and 11.10(a): the batch view rebuilds each signed content and flags a mismatch.
	test('the batch view shows every signature bound, and flags an entry altered behind the application', async () => {
		const { id, entryId } = await performAndVerify();
		const fresh = await buildBatchView(db, (await loadBatchRecords(db, id))!);
		const step = fresh.sections.flatMap((s) => s.steps).find((s) => s.key === 'weigh_sucrose')!;
		expect(step.current?.signatureBound).toBe(true);
		expect(step.verification?.signatureBound).toBe(true);
		expect(fresh.unboundSignatures).toBe(0);
		await tamper(entryId);
		const altered = await buildBatchView(db, (await loadBatchRecords(db, id))!);
		const s2 = altered.sections.flatMap((s) => s.steps).find((s) => s.key === 'weigh_sucrose')!;
		expect(s2.current?.signatureBound).toBe(false);
		// The verification bound that entry, so it no longer holds either.
		expect(s2.verification?.signatureBound).toBe(false);
		expect(altered.unboundSignatures).toBe(2);
	});

	test('an entry whose performed signature no longer matches is not verified', async () => {
		const id = await insertBatch(db);
		const r = await recordStepEntry(db, { user: operator.user, session: operator.session, address: '10.1.0.1', batchId: id, stepKey: 'weigh_sucrose', values: goodSucrose, credentials: credentialsOf(operator) });
		operator = await refresh(db, operator);
		await tamper(r.entryId);
		await expect(verifyStep(db, { user: supervisor.user, session: supervisor.session, address: 'x', batchId: id, stepKey: 'weigh_sucrose', credentials: credentialsOf(supervisor) })).rejects.toThrow(/does not match the entry/);
		expect(await db.select().from(stepVerification).where(eq(stepVerification.batchId, id))).toHaveLength(0);
	});

	// Finding 2: the batches the seed issues and executes through the services (masters/issue.ts, entries, verify) all check out.
	test('every signature on the seeded batches, the issue signature included, is bound', async () => {
		const seeded = await db.select({ id: batch.id }).from(batch).where(sql`${batch.issuedBy} IS NOT NULL`);
		expect(seeded.length).toBeGreaterThan(0);
		for (const { id } of seeded) {
			const view = await buildBatchView(db, (await loadBatchRecords(db, id))!);
			expect(view.issueSignature?.meaning).toBe('issued');
			expect(view.issueSignatureBound).toBe(true);
			expect(view.unboundSignatures).toBe(0);
		}
	});

	// Finding 15, 21 CFR 211.188 and 11.10(a): the frozen parts of an issued batch row cannot be updated; status and version can.
	test('a trigger refuses changing the snapshot, its hash, the scaled quantities, the number or the master of a batch', async () => {
		const id = await insertBatch(db);
		const attempts = [
			sql`UPDATE batch SET snapshot = jsonb_set(snapshot, '{header,productName}', '"Other"'::jsonb) WHERE id = ${id}`,
			sql`UPDATE batch SET snapshot_hash = 'ffff' WHERE id = ${id}`,
			sql`UPDATE batch SET scaled = NULL WHERE id = ${id}`,
			sql`UPDATE batch SET number = 'TB-CHANGED' WHERE id = ${id}`,
			sql`UPDATE batch SET master_record_id = (SELECT id FROM master_record WHERE id <> batch.master_record_id LIMIT 1) WHERE id = ${id}`,
			sql`UPDATE batch SET batch_size = 13 WHERE id = ${id}`
		];
		for (const a of attempts) {
			// drizzle wraps the database error; the trigger's message is its cause.
			const err = await db.execute(a).then(() => null, (e: Error & { cause?: Error }) => e);
			expect(err?.cause?.message ?? err?.message).toMatch(/is issued: its snapshot, number, master and size cannot change/);
		}
		await db.execute(sql`UPDATE batch SET status = 'in-progress', version = version + 1 WHERE id = ${id}`);
		const [b] = await db.select().from(batch).where(eq(batch.id, id));
		expect(b).toMatchObject({ status: 'in-progress', version: 2 });
	});

	// Finding 21: one version bump for every writer (the cycles area imports it).
	test('bumpBatchVersion increments the version, sets a status only when given, and refuses an unknown batch', async () => {
		expect(OPEN_BATCH_STATUSES).toEqual(['issued', 'in-progress', 'awaiting-review']);
		const id = await insertBatch(db);
		const v = await runUnitOfWork(db, systemActor, async (uow) => {
			await loadBatchRecords(uow.tx, id, { lock: true });
			const a = await bumpBatchVersion(uow.tx, id);
			const b = await bumpBatchVersion(uow.tx, id, 'in-progress');
			await uow.audit({ action: 'test.bump', entityType: 'batch', entityId: id, batchId: id });
			return [a, b];
		});
		expect(v).toEqual([2, 3]);
		const [row] = await db.select().from(batch).where(eq(batch.id, id));
		expect(row).toMatchObject({ version: 3, status: 'in-progress' });
		await expect(runUnitOfWork(db, systemActor, (uow) => bumpBatchVersion(uow.tx, 'no-such-batch'))).rejects.toThrow(/no batch/);
	});

	// Findings 8 and 18: the entry route caps its body and bounds `values`; it works without getClientAddress.
	test('the entry API refuses an oversized body (413) and unbounded values (400), and signs without getClientAddress', async () => {
		const id = await insertBatch(db);
		const path = `/api/batches/${id}/steps/weigh_sucrose/entries`;
		const params = { id, stepKey: 'weigh_sucrose' };
		const post = (body: string, headers: Record<string, string> = {}) => call(postEntry, path, operator, params, { method: 'POST', headers: { 'content-type': 'application/json', ...headers }, body });
		const signatureBody = { password: DEMO_PASSWORD, username: operator.user.username };
		const huge = await post(JSON.stringify({ values: { sucrose_weighed: 'x'.repeat(300 * 1024) }, signature: signatureBody }));
		expect(huge.status).toBe(413);
		// A declared length over the cap is refused before the body is read.
		expect((await post('{}', { 'content-length': String(10 * 1024 * 1024) })).status).toBe(413);
		const manyKeys = Object.fromEntries(Array.from({ length: 201 }, (_, i) => [`f${i}`, '1']));
		expect((await post(JSON.stringify({ values: manyKeys, signature: signatureBody }))).status).toBe(400);
		expect((await post(JSON.stringify({ values: { ['k'.repeat(49)]: '1' }, signature: signatureBody }))).status).toBe(400);
		expect((await post(JSON.stringify({ values: { sucrose_weighed: 'x'.repeat(20_001) }, signature: signatureBody }))).status).toBe(400);
		const ok = await post(JSON.stringify({ values: goodSucrose, signature: signatureBody }));
		expect(ok.status).toBe(201);
		operator = await refresh(db, operator);
	});

	// Finding 27: a malformed x-filename is the client's error, not a server crash.
	test('an upload whose x-filename is not URI-encoded is refused with 400', async () => {
		const id = await insertBatch(db);
		const png = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 0]);
		const res = await call(postAttachment, `/api/batches/${id}/attachments`, operator, { id }, { method: 'POST', headers: { 'content-type': 'image/png', 'x-step-key': 'weigh_sucrose', 'x-filename': '%E0%A4%A' }, body: png });
		expect(res.status).toBe(400);
		expect(await res.json()).toMatchObject({ code: 'invalid-input' });
	});

	// Finding 36: the lookup answers for its batch only and for items that batch uses.
	test('the lookup needs an existing batch and an item of its template', async () => {
		const id = await insertBatch(db);
		const get = (batchId: string, q: string) => call(lookup, `/api/batches/${batchId}/lookup?${q}`, operator, { id: batchId });
		expect((await get('no-such-batch', 'lot=T-SUC-OK&item=EXC-0101')).status).toBe(404);
		expect((await get(id, `lot=T-SUC-OK&item=${'X'.repeat(41)}`)).status).toBe(400);
		expect((await get(id, 'lot=T-SUC-OK&item=NOT-IN-BATCH')).status).toBe(400);
		const found = await get(id, 'lot=T-SUC-OK&item=EXC-0101');
		expect(found.status).toBe(200);
		expect(await found.json()).toMatchObject({ lot: { lotNumber: 'T-SUC-OK', itemCode: 'EXC-0101' } });
	});

	// Findings 8, 18 and 5: the step form action caps the form before parsing it and answers refusals in the person's language.
	test('the step form action refuses an oversized form (413) and words a refusal from the catalogue', async () => {
		const id = await insertBatch(db);
		await db.update(batch).set({ status: 'released' }).where(eq(batch.id, id));
		const act = async (form: FormData | string, locale: 'en' | 'de') => {
			const url = new URL(`http://localhost/batches/${id}/steps/weigh_sucrose?/enter`);
			const request = typeof form === 'string' ? new Request(url, { method: 'POST', headers: { 'content-type': 'application/x-www-form-urlencoded' }, body: form }) : new Request(url, { method: 'POST', body: form });
			const event = { url, params: { id, stepKey: 'weigh_sucrose' }, locals: { user: operator.user, session: operator.session, requestId: 'test', locale }, request };
			return (await stepActions.enter(event as never)) as { status: number; data: { signError: string; code: string } };
		};
		const form = () => {
			const f = new FormData();
			f.set('payload', JSON.stringify({ values: goodSucrose, version: 1 }));
			f.set('sign_username', operator.user.username);
			f.set('sign_password', DEMO_PASSWORD);
			return f;
		};
		const closedDe = await act(form(), 'de');
		expect(closedDe.status).toBe(423);
		expect(closedDe.data).toMatchObject({ code: 'batch-batch-closed', signError: de.batches?.errors?.['batch-closed'] });
		expect(closedDe.data.signError).toBe('Diese Charge ist abgeschlossen.');
		const closedEn = await act(form(), 'en');
		expect(closedEn.data.signError).toBe('This batch is closed.');
		const big = await act(`payload=${'x'.repeat(300 * 1024)}`, 'en');
		expect(big.status).toBe(413);
		expect(big.data.code).toBe('batch-too-large');
	});
});
