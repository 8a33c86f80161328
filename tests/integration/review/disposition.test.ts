import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { eq, sql } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { batch, batchDisposition, signature } from '$lib/server/db/schema';
import { disposeBatch, isReviewError, loadReviewRecords, markReviewed, reviewItemsOf, type DispositionRequest } from '$lib/server/review';
import { recordStepEntry } from '$lib/server/batches/entries';
import { verifyStep } from '$lib/server/batches/verify';
import { ExecutionError } from '$lib/server/batches/errors';
import { AuthError } from '$lib/server/auth/errors';
import { checkCheckpointSignature, getPublicSiteKey } from '$lib/server/audit/checkpoint';
import { hashContent } from '$lib/server/signatures/ceremony';
import { dispositionSignatureContent } from '$lib/server/review/disposition';
import { reviewStateOf } from '$lib/domain/review';
import { databaseKinds, type TestDatabase } from '../support/databases';
import { addFixtureInventory, seededDatabase } from '../batches/support';
import { addPerson, closeDeviations, credentialsOf, executeShortBatch, personOf, refresh, values, writeCounts, type Crew, type Person } from './support';

/** "<status> <code> <gate codes>" of a refusal, or "ok". */
async function outcome(p: Promise<unknown>): Promise<string> {
	try {
		await p;
		return 'ok';
	} catch (err) {
		if (isReviewError(err)) return `${err.status} ${err.code}${err.reasons.length ? ` ${err.reasons.map((r) => r.code).join(',')}` : ''}`;
		if (err instanceof ExecutionError || err instanceof AuthError) return `${err.status} ${err.code}`;
		throw err;
	}
}

describe.each(databaseKinds)('review and disposition on %s', (kind) => {
	let t: TestDatabase;
	let db: Database;
	let crew: Crew;
	let qa: Person;
	let qa2: Person;

	beforeAll(async () => {
		t = await seededDatabase(kind);
		db = t.handle.db;
		await addFixtureInventory(db);
		crew = { operator: await personOf(db, 'operator'), supervisor: await personOf(db, 'supervisor') };
		qa = await personOf(db, 'qa');
		qa2 = await addPerson(db, 'qa2', 'Ines Varrow (invented)', ['qa']);
	}, 240_000);
	afterAll(async () => t?.dispose());

	function dispose(who: Person, batchId: string, decision: 'released' | 'rejected', extra: Partial<DispositionRequest> = {}) {
		return disposeBatch(db, { user: who.user, session: who.session, address: '10.2.0.9', batchId, decision, credentials: credentialsOf(who), ...extra });
	}
	async function markAll(batchId: string, who: Person = qa) {
		const r = await loadReviewRecords(db, batchId);
		for (const i of reviewItemsOf(r!).filter((x) => x.markable && reviewStateOf(x, r!.marks) !== 'reviewed')) await markReviewed(db, who.user, { batchId, itemKey: i.key, itemHash: i.hash, comment: i.kind === 'audit-trail' ? 'Trail read (invented)' : null });
	}
	/** A batch with every gate clear but the ones a test opens. */
	async function readyBatch(): Promise<string> {
		const id = await executeShortBatch(db, crew);
		crew.operator = await refresh(db, crew.operator);
		const r = await closeDeviations(db, id, crew.supervisor, qa2);
		crew.supervisor = r.investigator;
		qa2 = r.approver;
		await markAll(id);
		return id;
	}

	// 21 CFR 211.192; FDA Data Integrity Q&A (2018) Q7; EU GMP 4.9: what needs a human, and marks that survive reloads but not changes.
	test('the review lists the out-of-limit value, its deviation and the audit trail; a mark survives a reload and a later correction needs review again', async () => {
		const id = await executeShortBatch(db, crew);
		const r = (await loadReviewRecords(db, id))!;
		expect(r.records.batch.status).toBe('awaiting-review');
		const items = reviewItemsOf(r);
		expect(items.map((i) => i.kind).sort()).toEqual(['audit-trail', 'deviation', 'out-of-limit']);
		expect(items.find((i) => i.kind === 'out-of-limit')!.content).toMatchObject({ fields: [{ key: 'wfi_temperature' }], comment: 'Cooling water slow (invented)' });
		const trail = items.find((i) => i.kind === 'audit-trail')!;
		// perform ×3 (+ their signatures), verify (+ signature), status changes: all critical data.
		expect(trail.content.events as number).toBeGreaterThanOrEqual(8);
		await markAll(id);
		const again = (await loadReviewRecords(db, id))!;
		expect(reviewItemsOf(again).every((i) => reviewStateOf(i, again.marks) === 'reviewed')).toBe(true);
		// A second mark of the same version, and a mark of a version the reviewer did not see, are refused.
		expect(await outcome(markReviewed(db, qa.user, { batchId: id, itemKey: 'audit-trail', itemHash: reviewItemsOf(again).at(-1)!.hash }))).toBe('409 already-reviewed');
		expect(await outcome(markReviewed(db, qa.user, { batchId: id, itemKey: 'audit-trail', itemHash: 'f'.repeat(64) }))).toBe('409 item-changed');
		expect(await outcome(markReviewed(db, qa.user, { batchId: id, itemKey: 'nothing:here', itemHash: 'x' }))).toBe('404 unknown-item');
		// EU GMP 4.9: the operator corrects the WFI temperature after QA's marks.
		await recordStepEntry(db, { user: crew.operator.user, session: crew.operator.session, address: '10.2.0.1', batchId: id, stepKey: 'prepare_buffer', values: { ...values.prepare_buffer, wfi_temperature: '22.0' }, reasonCode: 'transcription-error', comment: 'Read from the wrong display', expectedVersion: again.records.batch.version, credentials: credentialsOf(crew.operator) });
		crew.operator = await refresh(db, crew.operator);
		const changed = (await loadReviewRecords(db, id))!;
		const states = Object.fromEntries(reviewItemsOf(changed).map((i) => [i.kind, reviewStateOf(i, changed.marks)]));
		// The out-of-limit entry itself did not change (it is only superseded): its mark still counts.
		expect(states).toEqual({ 'out-of-limit': 'reviewed', deviation: 'reviewed', correction: 'needs-review', 'audit-trail': 'changed' });
		const correction = reviewItemsOf(changed).find((i) => i.kind === 'correction')!;
		expect(correction.content).toMatchObject({ reasonCode: 'transcription-error', oldValues: { wfi_temperature: { text: '27.0' } }, newValues: { wfi_temperature: { text: '22.0' } } });
	});

	// 21 CFR 211.192, 211.188; Annex 11, 15: each open gate refuses the release with its reason, and nothing is written.
	test('release with each gate open is refused with the reason and nothing is written', async () => {
		// Not awaiting review: the critical step is not verified (211.188(b)(11)).
		const unverified = await executeShortBatch(db, crew, { verify: false, wfi: '20.0' });
		// An open deviation (211.192): executed, reviewed, deviation left open.
		const openDeviation = await executeShortBatch(db, crew);
		await markAll(openDeviation);
		// An item not reviewed (211.192): deviation closed, nothing marked.
		const unreviewed = await executeShortBatch(db, crew);
		const r = await closeDeviations(db, unreviewed, crew.supervisor, qa2);
		crew.supervisor = r.investigator;
		qa2 = r.approver;
		const cases: [string, string][] = [
			[unverified, '409 gates-open not-awaiting-review,unverified-step,unreviewed-item'],
			[openDeviation, '409 gates-open open-deviation'],
			[unreviewed, '409 gates-open unreviewed-item']
		];
		for (const [id, expected] of cases) {
			const before = await writeCounts(db, id);
			expect(await outcome(dispose(qa, id, 'released'))).toBe(expected);
			expect(await writeCounts(db, id)).toEqual(before);
		}
		// The message names the clause and what is open.
		const err = await dispose(qa, openDeviation, 'released').catch((e: Error) => e);
		expect(String((err as Error).message)).toMatch(/open-deviation \(DEV-\d{4}-\d+\) \[21 CFR 211\.192\]/);
	}, 120_000);

	// Segregation of duties (design.md; 21 CFR 211.22(a)): whoever performed or verified a step does not release the batch.
	test('release by a QA person who performed or verified a step of the batch is refused, and nothing is written', async () => {
		const qaOperator = await addPerson(db, 'qa-op', 'Rune Alsgaard (invented)', ['qa', 'operator']);
		const qaSupervisor = await addPerson(db, 'qa-sup', 'Mira Tennant (invented)', ['qa', 'supervisor']);
		const id = await executeShortBatch(db, { operator: qaOperator, supervisor: qaSupervisor });
		const r = await closeDeviations(db, id, crew.supervisor, qa2);
		crew.supervisor = r.investigator;
		qa2 = r.approver;
		await markAll(id);
		const before = await writeCounts(db, id);
		expect(await outcome(dispose(await refresh(db, qaOperator), id, 'released'))).toBe('403 gates-open signer-performed');
		expect(await outcome(dispose(await refresh(db, qaSupervisor), id, 'released'))).toBe('403 gates-open signer-verified');
		expect(await outcome(dispose(await refresh(db, qaOperator), id, 'rejected', { comment: 'no' }))).toBe('403 gates-open signer-performed');
		expect(await writeCounts(db, id)).toEqual(before);
	}, 120_000);

	// 21 CFR 11.50, 11.70, 211.192; Annex 11, 15; design.md: "a signed ledger checkpoint at every batch release".
	test('a release writes the signature, the disposition, the final status, the audit event and a new signed checkpoint', async () => {
		const id = await readyBatch();
		const before = await writeCounts(db, id);
		// A wrong password signs nothing (11.200(a)).
		expect(await outcome(dispose(qa, id, 'released', { credentials: { method: 'password', username: 'qa', password: 'wrong-password' } }))).toBe('401 bad-credentials');
		expect(await writeCounts(db, id)).toEqual(before);
		const seen = (await loadReviewRecords(db, id))!;
		const result = await dispose(await refresh(db, qa), id, 'released', { comment: 'Record reviewed; deviation closed (invented).' });
		qa = await refresh(db, qa);
		expect(result).toMatchObject({ decision: 'released', status: 'released' });
		const [b] = await db.select().from(batch).where(eq(batch.id, id));
		expect(b.status).toBe('released');
		const [d] = await db.select().from(batchDisposition).where(eq(batchDisposition.batchId, id));
		expect(d).toMatchObject({ decision: 'released', comment: 'Record reviewed; deviation closed (invented).', decidedBy: qa.user.id, decidedByName: qa.user.name, signatureId: result.signatureId });
		const [s] = await db.select().from(signature).where(eq(signature.id, result.signatureId));
		expect(s).toMatchObject({ meaning: 'released', entityType: 'batch', entityId: id, batchId: id, printedName: qa.user.name, signerId: qa.user.id });
		// 11.70: the signature's hash is that of the disposition content as it was judged.
		expect(s.contentHash).toBe(hashContent(dispositionSignatureContent(seen, 'released', 'Record reviewed; deviation closed (invented).')));
		const after = await writeCounts(db, id);
		expect(after.dispositions).toBe(1);
		expect(after.signatures).toBe(before.signatures + 1);
		expect(after.checkpoints).toBe(before.checkpoints + 1);
		const events = await db.execute(sql`select action, after from audit_event where batch_id = ${id} and action = 'disposition.release'`);
		expect((events as unknown as { rows: unknown[] }).rows ?? events).toHaveLength(1);
		// The checkpoint covers the release and is signed with the site key (RFC 8032 Ed25519).
		expect(result.checkpoint).not.toBeNull();
		const [{ seq }] = (await db.execute(sql`select max(seq)::int as seq from audit_event where batch_id = ${id}`).then((x) => (x as unknown as { rows: { seq: number }[] }).rows ?? x)) as { seq: number }[];
		expect(result.checkpoint!.size).toBeGreaterThanOrEqual(seq);
		expect(checkCheckpointSignature(result.checkpoint!, (await getPublicSiteKey(db))!.publicKey)).toBe(true);
	}, 120_000);

	// 21 CFR 211.188, 11.10(e): a released batch is read-only for every writer and at the database.
	test('after release an entry, a verification, a review mark and a second disposition are refused, and the batch row cannot change', async () => {
		const id = await readyBatch();
		await dispose(await refresh(db, qa), id, 'released');
		qa = await refresh(db, qa);
		expect(await outcome(recordStepEntry(db, { user: crew.operator.user, session: crew.operator.session, address: '10.2.0.1', batchId: id, stepKey: 'prepare_buffer', values: values.prepare_buffer, reasonCode: 'other', comment: 'late', credentials: credentialsOf(crew.operator) }))).toBe('423 batch-closed');
		expect(await outcome(verifyStep(db, { user: crew.supervisor.user, session: crew.supervisor.session, address: '10.2.0.2', batchId: id, stepKey: 'weigh_sucrose', credentials: credentialsOf(crew.supervisor) }))).toBe('423 batch-closed');
		expect(await outcome(markReviewed(db, qa.user, { batchId: id, itemKey: 'audit-trail', itemHash: 'x' }))).toBe('423 batch-closed');
		expect(await outcome(dispose(qa, id, 'rejected', { comment: 'again' }))).toBe('409 gates-open already-disposed');
		// Trigger batch_disposed (migration 0021): even a direct UPDATE cannot move the status back.
		const err = await db.execute(sql`UPDATE batch SET status = 'awaiting-review' WHERE id = ${id}`).then(() => null, (e: Error & { cause?: Error }) => e);
		expect(err?.cause?.message ?? err?.message).toMatch(/is released: it cannot change any more/);
		const del = await db.execute(sql`DELETE FROM batch_disposition WHERE batch_id = ${id}`).then(() => null, (e: Error) => e);
		expect(del).not.toBeNull();
	}, 120_000);

	// 21 CFR 211.192 (conclusions written), 11.50: rejection needs a comment and QA, but not closed deviations.
	test('a batch with an open deviation and unreviewed items can be rejected with a comment; without one it is refused', async () => {
		const id = await executeShortBatch(db, crew);
		const before = await writeCounts(db, id);
		expect(await outcome(dispose(qa, id, 'rejected'))).toBe('409 gates-open comment-required');
		expect(await writeCounts(db, id)).toEqual(before);
		const result = await dispose(await refresh(db, qa), id, 'rejected', { comment: 'Buffer prepared outside the temperature range (invented).' });
		qa = await refresh(db, qa);
		expect(result.status).toBe('rejected');
		const [s] = await db.select().from(signature).where(eq(signature.id, result.signatureId));
		expect(s.meaning).toBe('rejected');
		const [b] = await db.select({ status: batch.status }).from(batch).where(eq(batch.id, id));
		expect(b.status).toBe('rejected');
		expect(result.checkpoint).not.toBeNull();
	}, 120_000);
});
