import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { eq } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { batch, deviation, mailOutbox, signature } from '$lib/server/db/schema';
import { getDeviation, listDeviations, openDeviationsOf, raiseManualDeviation, transitionDeviation, updateDeviation, type TransitionInput } from '$lib/server/deviations';
import { hashContent } from '$lib/server/signatures/ceremony';
import { deviationSignatureContent, isLatestSignatureBound } from '$lib/server/deviations/workflow';
import { databaseKinds, type TestDatabase } from '../support/databases';
import { credentialsOf, insertBatch, personOf, seededDatabase, type Person } from '../batches/support';
import { addSecondQa, eventsOf, outcome, snapshotOf } from './support';

// Invented investigation texts (synthetic inputs).
const findings = {
	classification: 'major' as const,
	investigation: 'Shelf inlet temperature rose 4 °C for 6 min; chiller log shows a compressor trip (invented).',
	rootCause: 'Compressor overload relay set too low after maintenance (invented).',
	impact: 'Product temperature stayed below the collapse temperature; no impact on the batch (invented).',
	capaRefs: ['CAPA-2026-014']
};

describe.each(databaseKinds)('the deviation workflow on %s', (kind) => {
	let t: TestDatabase;
	let db: Database;
	let operator: Person;
	let supervisor: Person;
	let qa: Person;
	let qa2: Person;
	let inspector: Person;
	let batchId: string;

	beforeAll(async () => {
		t = await seededDatabase(kind);
		db = t.handle.db;
		await addSecondQa(db);
		operator = await personOf(db, 'operator');
		supervisor = await personOf(db, 'supervisor');
		qa = await personOf(db, 'qa');
		qa2 = await personOf(db, 'qa2');
		inspector = await personOf(db, 'inspector');
		batchId = await insertBatch(db);
	});
	afterAll(async () => t?.dispose());

	function step(who: Person, id: string, action: TransitionInput['action'], expectedVersion: number, extra: Partial<TransitionInput> = {}) {
		return transitionDeviation(db, { id, action, expectedVersion, user: who.user, session: who.session, credentials: credentialsOf(who), address: '10.1.0.9', ...extra });
	}
	async function raise(title = 'Label roll jammed at step weigh_sucrose (invented)') {
		return raiseManualDeviation(db, operator.user, { batchId, stepKey: 'weigh_sucrose', title, description: 'The operator stopped weighing while the roll was freed (invented).', immediateAction: 'Weighing paused; balance re-tared.' });
	}

	// 21 CFR 211.100(b): a deviation is recorded; 11.10(e): with its audit event.
	test('a manual raise by an operator records the deviation, open, with its audit event', async () => {
		const before = await snapshotOf(db);
		const { id, number } = await raise();
		expect(number).toMatch(/^DEV-\d{4}-\d{4}$/);
		const d = await getDeviation(db, id);
		expect(d).toMatchObject({ status: 'open', source: 'manual', kind: 'manual', batchId, stepKey: 'weigh_sucrose', createdByName: operator.user.name, version: 1, immediateAction: 'Weighing paused; balance re-tared.' });
		expect(d!.events.map((e) => e.action)).toEqual(['deviation.raise']);
		const after = await snapshotOf(db);
		expect(after.deviations - before.deviations).toBe(1);
	});

	test('a manual raise is refused for an unknown step (422), an inspector (403) and a batch that is no longer open (409), writing nothing', async () => {
		const before = await snapshotOf(db);
		expect(await outcome(raiseManualDeviation(db, operator.user, { batchId, stepKey: 'no_such_step', title: 'x', description: 'y' }))).toBe('422 unknown-step');
		expect(await outcome(raiseManualDeviation(db, inspector.user, { batchId, title: 'x', description: 'y' }))).toBe('403 forbidden');
		const closedBatch = await insertBatch(db);
		await db.update(batch).set({ status: 'released' }).where(eq(batch.id, closedBatch));
		expect(await outcome(raiseManualDeviation(db, operator.user, { batchId: closedBatch, title: 'x', description: 'y' }))).toBe('409 batch-closed');
		expect(await snapshotOf(db)).toEqual(before);
	});

	// 211.192 investigation and QA approval; 11.50 meanings; 11.10(e) audit; 11.70 binding.
	test('open → investigating → pending-qa-approval → closed: every transition signed with its meaning and audited', async () => {
		const { id } = await raise();
		const edited = await updateDeviation(db, supervisor.user, { id, expectedVersion: 1, fields: { classification: 'major' } });
		expect(edited).toMatchObject({ version: 2, changed: ['classification'] });
		const started = await step(supervisor, id, 'start-investigation', 2);
		expect(started).toMatchObject({ status: 'investigating', version: 3 });
		const filled = await updateDeviation(db, supervisor.user, { id, expectedVersion: 3, fields: findings });
		expect(filled.changed.sort()).toEqual(['capaRefs', 'impact', 'investigation', 'rootCause']);
		const submitted = await step(supervisor, id, 'submit', filled.version);
		expect(submitted.status).toBe('pending-qa-approval');
		const closed = await step(qa, id, 'close', submitted.version, { closureComment: 'Investigation accepted; CAPA opened.' });
		expect(closed.status).toBe('closed');

		const d = (await getDeviation(db, id))!;
		expect(d).toMatchObject({ status: 'closed', closureComment: 'Investigation accepted; CAPA opened.', submittedBy: supervisor.user.id, capaRefs: ['CAPA-2026-014'] });
		expect(d.signatures.map((s) => [s.meaning, s.printedName])).toEqual([
			['reviewed', supervisor.user.name],
			['authored', supervisor.user.name],
			['approved', qa.user.name]
		]);
		expect(d.events.map((e) => e.action)).toEqual([
			'deviation.raise',
			'deviation.edit',
			'deviation.start-investigation',
			'signature.sign',
			'deviation.edit',
			'deviation.submit',
			'signature.sign',
			'deviation.close',
			'signature.sign'
		]);
		// 11.10(e): an edit keeps the old value beside the new one.
		const firstEdit = d.events.find((e) => e.action === 'deviation.edit')!;
		expect(firstEdit.before).toEqual({ classification: null });
		expect(firstEdit.after).toEqual({ classification: 'major', version: 2 });
		// 11.70: the closing signature's hash is the hash of the deviation as closed.
		const closing = d.signatures.find((s) => s.meaning === 'approved')!;
		expect(closing.contentHash).toBe(hashContent(deviationSignatureContent(d, 'close', null)));
		// The signature row and its ledger event are one: its audit_seq names a signature.sign event of this deviation.
		expect(d.events.find((e) => e.seq === closing.auditSeq)?.action).toBe('signature.sign');
		expect(await openDeviationsOf(db, batchId)).not.toContainEqual(expect.objectContaining({ id }));
		expect(isLatestSignatureBound(d)).toBe(true);
	});

	// 11.70, 11.10(a): a signature that no longer matches its record is detected, not assumed.
	test('the latest signature is checked against the stored row: bound, not checkable after audited edits, unbound after a silent change', async () => {
		const { id } = await raise('Binding check (invented)');
		await step(supervisor, id, 'start-investigation', 1);
		expect(isLatestSignatureBound((await getDeviation(db, id))!)).toBe(true);
		// A change behind the application's back (no audit event) while investigating: the trigger allows it, the check catches it.
		await db.update(deviation).set({ investigation: 'written without the application (invented)' }).where(eq(deviation.id, id));
		expect(isLatestSignatureBound((await getDeviation(db, id))!)).toBe(false);
		await updateDeviation(db, supervisor.user, { id, expectedVersion: 2, fields: { classification: 'minor' } });
		expect(isLatestSignatureBound((await getDeviation(db, id))!)).toBeNull();
	});

	// 11.10(f): the permitted sequence of steps is enforced.
	test('out-of-order transitions are refused with 409 and write nothing', async () => {
		const { id } = await raise();
		const before = await snapshotOf(db, id);
		expect(await outcome(step(qa, id, 'close', 1))).toBe('409 wrong-state');
		expect(await outcome(step(supervisor, id, 'submit', 1))).toBe('409 wrong-state');
		expect(await outcome(step(qa, id, 'send-back', 1, { reason: 'More data' }))).toBe('409 wrong-state');
		expect(await snapshotOf(db, id)).toEqual(before);
	});

	// 211.192: the investigation and its conclusions are written before closure.
	test('submission without investigation, root cause, impact or classification is refused (422) and names what is missing', async () => {
		const { id } = await raise();
		await step(supervisor, id, 'start-investigation', 1);
		await updateDeviation(db, supervisor.user, { id, expectedVersion: 2, fields: { investigation: 'Partial notes only (invented).' } });
		const before = await snapshotOf(db, id);
		let missing: string[] = [];
		try {
			await step(supervisor, id, 'submit', 3);
		} catch (err) {
			missing = (err as { missing: string[] }).missing;
		}
		expect(missing).toEqual(['classification', 'rootCause', 'impact']);
		expect(await snapshotOf(db, id)).toEqual(before);
	});

	test('a deviation is never closed without an investigation: close straight from open or investigating is refused', async () => {
		const { id } = await raise();
		expect(await outcome(step(qa, id, 'close', 1))).toBe('409 wrong-state');
		await step(supervisor, id, 'start-investigation', 1);
		expect(await outcome(step(qa, id, 'close', 2))).toBe('409 wrong-state');
		expect((await getDeviation(db, id))!.status).toBe('investigating');
	});

	// Common GMP practice (four eyes); 11.10(g) authority checks.
	test('whoever submitted the investigation cannot approve its closure (403); a second QA person can', async () => {
		const { id } = await raise();
		await step(qa, id, 'start-investigation', 1);
		const filled = await updateDeviation(db, qa.user, { id, expectedVersion: 2, fields: findings });
		const submitted = await step(qa, id, 'submit', filled.version);
		const before = await snapshotOf(db, id);
		expect(await outcome(step(qa, id, 'close', submitted.version))).toBe('403 own-submission');
		expect(await snapshotOf(db, id)).toEqual(before);
		expect((await step(qa2, id, 'close', submitted.version)).status).toBe('closed');
	});

	// The same rule over rounds, for someone who only wrote findings: sending back and
	// resubmitting by someone else does not make the first writer independent of them.
	test('whoever wrote the investigation in an earlier round cannot approve its closure after a resubmission by someone else (403)', async () => {
		const { id } = await raise();
		await step(supervisor, id, 'start-investigation', 1);
		// QA 1 writes the findings but never submits; the supervisor submits them.
		const written = await updateDeviation(db, qa.user, { id, expectedVersion: 2, fields: findings });
		const first = await step(supervisor, id, 'submit', written.version);
		const sentBack = await step(qa2, id, 'send-back', first.version, { reason: 'Add the balance check (invented).' });
		const edited = await updateDeviation(db, supervisor.user, { id, expectedVersion: sentBack.version, fields: { investigation: `${findings.investigation} Balance checked against its reference weight (invented).` } });
		const second = await step(supervisor, id, 'submit', edited.version);
		const before = await snapshotOf(db, id);
		expect(await outcome(step(qa, id, 'close', second.version))).toBe('403 own-submission');
		expect(await snapshotOf(db, id)).toEqual(before);
		expect((await getDeviation(db, id))!.investigators.sort()).toEqual([qa.user.id, supervisor.user.id].sort());
		// QA 2 only sent it back: independent of the findings, so may approve.
		expect((await step(qa2, id, 'close', second.version)).status).toBe('closed');
	});

	test('only QA closes, sends back or cancels: an operator is refused with 403 before any signature', async () => {
		const { id } = await raise();
		const before = await snapshotOf(db, id);
		expect(await outcome(step(operator, id, 'cancel', 1, { reason: 'Raised in error' }))).toBe('403 forbidden');
		expect(await outcome(step(inspector, id, 'start-investigation', 1))).toBe('403 forbidden');
		expect(await snapshotOf(db, id)).toEqual(before);
	});

	// Optimistic concurrency: two QA people never overwrite each other.
	test('a transition or edit against a stale version is refused with 409 and the current version', async () => {
		const { id } = await raise();
		await updateDeviation(db, supervisor.user, { id, expectedVersion: 1, fields: { classification: 'minor' } });
		const before = await snapshotOf(db, id);
		expect(await outcome(step(qa, id, 'cancel', 1, { reason: 'Duplicate' }))).toBe('409 stale-version');
		expect(await outcome(updateDeviation(db, supervisor.user, { id, expectedVersion: 1, fields: { classification: 'critical' } }))).toBe('409 stale-version');
		let current: number | null = null;
		try {
			await step(qa, id, 'cancel', 1, { reason: 'Duplicate' });
		} catch (err) {
			current = (err as { currentVersion: number | null }).currentVersion;
		}
		expect(current).toBe(2);
		expect(await snapshotOf(db, id)).toEqual(before);
	});

	test('two QA people cancelling at once: one succeeds, the other gets 409, one signature only', async () => {
		const { id } = await raise();
		const results = await Promise.all([outcome(step(qa, id, 'cancel', 1, { reason: 'Duplicate (QA 1)' })), outcome(step(qa2, id, 'cancel', 1, { reason: 'Duplicate (QA 2)' }))]);
		expect(results.sort()).toEqual(['409 stale-version', 'ok']);
		const d = (await getDeviation(db, id))!;
		expect(d.signatures.filter((s) => s.meaning === 'cancelled')).toHaveLength(1);
		expect(d.version).toBe(2);
	});

	// Annex 11, 9: the reason is recorded.
	test('cancel needs a reason (422); with one it is signed "cancelled" and the reason is stored and audited', async () => {
		const { id } = await raise();
		expect(await outcome(step(qa, id, 'cancel', 1, { reason: '  ' }))).toBe('422 reason-required');
		const done = await step(qa, id, 'cancel', 1, { reason: 'Raised twice for the same event (invented).' });
		expect(done.status).toBe('cancelled');
		const d = (await getDeviation(db, id))!;
		expect(d.cancelReason).toBe('Raised twice for the same event (invented).');
		expect(d.signatures.map((s) => s.meaning)).toEqual(['cancelled']);
		expect(d.events.find((e) => e.action === 'deviation.cancel')?.reason).toBe('Raised twice for the same event (invented).');
		expect(await outcome(step(qa, id, 'start-investigation', 2))).toBe('409 wrong-state');
	});

	test('QA sends an investigation back with a reason; it can be edited and submitted again', async () => {
		const { id } = await raise();
		await step(supervisor, id, 'start-investigation', 1);
		const filled = await updateDeviation(db, supervisor.user, { id, expectedVersion: 2, fields: findings });
		const submitted = await step(supervisor, id, 'submit', filled.version);
		expect(await outcome(step(qa, id, 'send-back', submitted.version))).toBe('422 reason-required');
		const back = await step(qa, id, 'send-back', submitted.version, { reason: 'Add the chiller service record (invented).' });
		expect(back.status).toBe('investigating');
		const again = await updateDeviation(db, supervisor.user, { id, expectedVersion: back.version, fields: { impact: `${findings.impact} Service record attached.` } });
		expect(again.changed).toEqual(['impact']);
		expect((await step(supervisor, id, 'submit', again.version)).status).toBe('pending-qa-approval');
	});

	test('field edits after submission are refused (409) and nothing changes', async () => {
		const { id } = await raise();
		await step(supervisor, id, 'start-investigation', 1);
		const filled = await updateDeviation(db, supervisor.user, { id, expectedVersion: 2, fields: findings });
		const submitted = await step(supervisor, id, 'submit', filled.version);
		const before = await snapshotOf(db, id);
		expect(await outcome(updateDeviation(db, supervisor.user, { id, expectedVersion: submitted.version, fields: { rootCause: 'Something else' } }))).toBe('409 wrong-state');
		expect(await outcome(updateDeviation(db, qa.user, { id, expectedVersion: submitted.version, fields: { rootCause: 'Something else' } }))).toBe('409 wrong-state');
		expect(await snapshotOf(db, id)).toEqual(before);
	});

	// 11.10(e) and 11.300(d): a wrong password signs nothing and changes nothing.
	test('a wrong password refuses the transition: no status change, no signature, no deviation event', async () => {
		const { id } = await raise();
		const before = await snapshotOf(db, id);
		const r = await outcome(step(qa, id, 'cancel', 1, { reason: 'Duplicate', credentials: { method: 'password', username: 'qa', password: 'not-the-password' } }));
		expect(r).toBe('401 bad-credentials');
		expect(await snapshotOf(db, id)).toEqual(before);
		expect(await db.select().from(signature).where(eq(signature.entityId, id))).toEqual([]);
	});

	// Issue 8: QA is told by e-mail when a deviation is raised and when it awaits approval; the
	// outbox rows are written in the same transaction as the action (mail/outbox.ts).
	test('raise and submit queue a mail to each QA person in the same transaction', async () => {
		const { id } = await raise('Mail check (invented)');
		const rows = () => db.select().from(mailOutbox).where(eq(mailOutbox.deviationId, id));
		const raised = await rows();
		expect(raised.map((r) => [r.kind, r.recipientUserId]).sort()).toEqual([
			['deviation-raised', qa.user.id],
			['deviation-raised', qa2.user.id]
		].sort());
		expect(raised[0].subject).toContain('Mail check (invented)');
		await step(supervisor, id, 'start-investigation', 1);
		const filled = await updateDeviation(db, supervisor.user, { id, expectedVersion: 2, fields: findings });
		await step(supervisor, id, 'submit', filled.version);
		expect((await rows()).filter((r) => r.kind === 'deviation-awaiting-approval')).toHaveLength(2);
		// A refused submission queues nothing more.
		expect(await outcome(step(supervisor, id, 'submit', filled.version + 1))).toBe('409 wrong-state');
		expect((await rows()).length).toBe(4);
	});

	// 11.10(f), 211.192: the database refuses what the services refuse, for writers that bypass them.
	test('the database refuses reopening a closed deviation, changing one under QA approval, and deleting one', async () => {
		const { id } = await raise('Guard check (invented)');
		await step(supervisor, id, 'start-investigation', 1);
		const filled = await updateDeviation(db, supervisor.user, { id, expectedVersion: 2, fields: findings });
		await step(supervisor, id, 'submit', filled.version);
		const refused = async (q: Promise<unknown>) => {
			try {
				await q;
				return 'written';
			} catch (err) {
				return String((err as { cause?: { message?: string }; message?: string }).cause?.message ?? (err as Error).message);
			}
		};
		expect(await refused(db.update(deviation).set({ rootCause: 'rewritten behind QA’s back' }).where(eq(deviation.id, id)))).toMatch(/pending QA approval: its content cannot change/);
		expect(await refused(db.update(deviation).set({ status: 'open' }).where(eq(deviation.id, id)))).toMatch(/cannot change from pending-qa-approval to open/);
		expect(await refused(db.delete(deviation).where(eq(deviation.id, id)))).toMatch(/never deleted/);
		await step(qa, id, 'close', filled.version + 1);
		expect(await refused(db.update(deviation).set({ status: 'investigating' }).where(eq(deviation.id, id)))).toMatch(/is closed: it cannot change/);
		expect((await getDeviation(db, id))!.rootCause).toBe(findings.rootCause);
	});

	// 211.192 and the release gate: unfinished deviations of a batch.
	test('openDeviationsOf lists the batch’s deviations that are not closed or cancelled', async () => {
		const other = await insertBatch(db);
		const a = await raiseManualDeviation(db, operator.user, { batchId: other, title: 'A (invented)', description: 'a' });
		const b = await raiseManualDeviation(db, operator.user, { batchId: other, title: 'B (invented)', description: 'b' });
		const c = await raiseManualDeviation(db, operator.user, { batchId: other, title: 'C (invented)', description: 'c' });
		await step(qa, b.id, 'cancel', 1, { reason: 'Duplicate of A' });
		await step(supervisor, c.id, 'start-investigation', 1);
		const open = await openDeviationsOf(db, other);
		expect(open.map((d) => [d.number, d.status])).toEqual([
			[a.number, 'open'],
			[c.number, 'investigating']
		]);
	});

	test('listDeviations filters by status, classification, batch, kind and text', async () => {
		const other = await insertBatch(db);
		const a = await raiseManualDeviation(db, operator.user, { batchId: other, title: 'Vial count mismatch at capping (invented)', description: 'x', classification: 'critical' });
		await raiseManualDeviation(db, operator.user, { batchId: other, title: 'Torn glove in grade B (invented)', description: 'y', classification: 'minor' });
		const byBatch = await listDeviations(db, { batchId: other });
		expect(byBatch.total).toBe(2);
		expect((await listDeviations(db, { batchId: other, classification: 'critical' })).items.map((i) => i.id)).toEqual([a.id]);
		expect((await listDeviations(db, { batchId: other, text: 'VIAL COUNT' })).items.map((i) => i.id)).toEqual([a.id]);
		expect((await listDeviations(db, { batchId: other, text: '100%_' })).total).toBe(0);
		expect((await listDeviations(db, { batchId: other, status: 'closed' })).total).toBe(0);
		expect((await listDeviations(db, { batchId: other, status: 'unfinished', kind: 'manual' })).total).toBe(2);
		expect((await listDeviations(db, { batchId: other, kind: 'out-of-limit' })).total).toBe(0);
		expect(byBatch.items[0].batchNumber).toMatch(/^TB-/);
	});
});
