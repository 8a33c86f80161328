import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { eq, sql } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { batch, deviation, signature, stepEntry, stepVerification } from '$lib/server/db/schema';
import { recordStepEntry, type StepEntryRequest } from '$lib/server/batches/entries';
import { verifyStep } from '$lib/server/batches/verify';
import { ExecutionError } from '$lib/server/batches/errors';
import { buildBatchView, loadBatchRecords } from '$lib/server/batches/query';
import { hashContent } from '$lib/server/signatures/ceremony';
import { AuthError } from '$lib/server/auth/errors';
import { databaseKinds } from '../support/databases';
import type { TestDatabase } from '../support/databases';
import { addFixtureInventory, credentialsOf, insertBatch, personOf, refresh, seededDatabase, type Person } from './support';

/** "<status> <code>" of a refusal, or "ok". */
async function outcome(p: Promise<unknown>): Promise<string> {
	try {
		await p;
		return 'ok';
	} catch (err) {
		if (err instanceof ExecutionError || err instanceof AuthError) return `${err.status} ${err.code}`;
		throw err;
	}
}

// Sucrose: 12 L × 50 mg/mL = 600.0 g, ± 0.5 % relative → 597.0 … 603.0 g (demo template, tightened to 1 decimal).
const goodSucrose = { sucrose_lot: 'T-SUC-OK', sucrose_balance: 'T-BAL6-OK', sucrose_weighed: '600.4' };

describe.each(databaseKinds)('executing a batch record on %s', (kind) => {
	let t: TestDatabase;
	let db: Database;
	let operator: Person;
	let operator2: Person;
	let supervisor: Person;

	beforeAll(async () => {
		t = await seededDatabase(kind);
		db = t.handle.db;
		await addFixtureInventory(db);
		operator = await personOf(db, 'operator');
		operator2 = await personOf(db, 'operator2');
		supervisor = await personOf(db, 'supervisor');
	});
	afterAll(async () => t?.dispose());

	function enter(who: Person, batchId: string, stepKey: string, values: Record<string, unknown>, extra: Partial<StepEntryRequest> = {}) {
		return recordStepEntry(db, { user: who.user, session: who.session, address: '10.1.0.1', batchId, stepKey, values, credentials: credentialsOf(who), ...extra });
	}
	async function versionOf(batchId: string) {
		const [b] = await db.select({ version: batch.version, status: batch.status }).from(batch).where(eq(batch.id, batchId));
		return b;
	}
	async function countRows(batchId: string) {
		const [e] = await db.select({ n: sql<number>`count(*)::int` }).from(stepEntry).where(eq(stepEntry.batchId, batchId));
		const [s] = await db.select({ n: sql<number>`count(*)::int` }).from(signature).where(eq(signature.batchId, batchId));
		return { entries: e.n, signatures: s.n };
	}

	// 21 CFR 211.188(b), 11.50, 11.70: the step's values are stored with a "performed" signature bound to them.
	test('a step is performed with a signature bound to the stored values; the batch moves to in progress', async () => {
		const id = await insertBatch(db);
		const r = await enter(operator, id, 'weigh_sucrose', goodSucrose);
		expect(r).toMatchObject({ correction: false, outOfLimits: [], late: false, deviations: [], status: 'in-progress', version: 2 });
		const [row] = await db.select().from(stepEntry).where(eq(stepEntry.id, r.entryId));
		const [sig] = await db.select().from(signature).where(eq(signature.id, row.signatureId));
		expect(sig.meaning).toBe('performed');
		expect(sig.printedName).toBe(operator.user.name);
		expect(row.values).toMatchObject({
			sucrose_weighed: { kind: 'number', text: '600.4', unit: 'g', value: 600.4, canonical: { value: 600.4, unit: 'g' } },
			sucrose_lot: { kind: 'material', lotNumber: 'T-SUC-OK', itemCode: 'EXC-0101' },
			sucrose_balance: { kind: 'equipment', code: 'T-BAL6-OK' }
		});
		// The calculated target is computed on the server: 12 L × 50 mg/mL = 600.0 g.
		expect(row.calculations).toMatchObject({ sucrose_qty: { reported: 600, unit: 'g' } });
		expect(sig.contentHash).toBe(
			hashContent({
				batchId: id,
				batchNumber: (await loadBatchRecords(db, id))!.batch.number,
				snapshotHash: (await loadBatchRecords(db, id))!.batch.snapshotHash,
				stepKey: 'weigh_sucrose',
				entryId: row.id,
				values: row.values,
				calculations: row.calculations,
				outOfLimits: [],
				comment: null,
				reasonCode: null,
				supersedes: null,
				workedAt: new Date(row.workedAt).toISOString()
			})
		);
		expect(await versionOf(id)).toEqual({ version: 2, status: 'in-progress' });
		operator = await refresh(db, operator);
	});

	// 21 CFR 11.10(f): the permitted sequence of steps.
	test('a step out of order is refused; a step that may run out of order is not', async () => {
		const id = await insertBatch(db);
		expect(await outcome(enter(operator, id, 'prepare_buffer', { compounding_vessel: 'T-VSL-OK', wfi_temperature: '20.0', solids_dissolved: true }))).toBe('409 out-of-order');
		// thaw_ds has mayRunOutOfOrder: it may be done before the weighing steps.
		const r = await enter(operator, id, 'thaw_ds', { ds_lot: 'T-DS-OK', ds_cold_room: 'T-COLD-OK', ds_concentration: '50.2', ds_thawed_at: new Date(Date.now() - 60_000).toISOString() });
		expect(r.outOfLimits).toEqual([]);
		expect(await countRows(id)).toEqual({ entries: 1, signatures: 1 });
	});

	// 21 CFR 211.84(a), 211.86 (lots); 211.67, 211.68(a) (equipment); 11.10(h) (valid input source).
	test('lots and instruments are checked at entry: quarantine, expired, wrong item, unknown; out of service, uncalibrated, not clean', async () => {
		const id = await insertBatch(db);
		const cases: [Record<string, unknown>, string][] = [
			[{ ...goodSucrose, sucrose_lot: 'T-SUC-QUAR' }, 'not-released'],
			[{ ...goodSucrose, sucrose_lot: 'T-SUC-EXP' }, 'expired'],
			[{ ...goodSucrose, sucrose_lot: 'T-HIS-OK' }, 'wrong-item'],
			[{ ...goodSucrose, sucrose_lot: 'NO-SUCH-LOT' }, 'not-entered'],
			[{ ...goodSucrose, sucrose_balance: 'T-BAL6-OOS' }, 'not-in-service'],
			[{ ...goodSucrose, sucrose_balance: 'T-BAL6-DIRTY' }, 'not-in-service'],
			[{ ...goodSucrose, sucrose_balance: 'T-BAL6-CAL' }, 'calibration-overdue'],
			[{ ...goodSucrose, sucrose_balance: 'T-BAL220-OK' }, 'wrong-class']
		];
		for (const [values, code] of cases) {
			const err = await enter(operator, id, 'weigh_sucrose', values).catch((e) => e);
			expect(err).toBeInstanceOf(ExecutionError);
			expect(err.code).toBe('invalid-values');
			expect(err.issues.map((i: { code: string }) => i.code)).toEqual([code]);
		}
		// A lot may be used on its expiry date (common practice; limits.ts checkLot).
		expect(await outcome(enter(operator, id, 'weigh_sucrose', { ...goodSucrose, sucrose_lot: 'T-SUC-TODAY' }))).toBe('ok');
		expect(await countRows(id)).toEqual({ entries: 1, signatures: 1 });
	});

	// Bad input: wrong type, wrong unit, too many decimals, missing required value, a field not in the step.
	test('values of the wrong type or unit are refused with a plain message and nothing is written', async () => {
		const id = await insertBatch(db);
		const bad: [Record<string, unknown>, string][] = [
			[{ ...goodSucrose, sucrose_weighed: 'six hundred' }, 'not-a-number'],
			[{ ...goodSucrose, sucrose_weighed: true }, 'wrong-type'],
			[{ ...goodSucrose, sucrose_weighed: { value: '600.4', unit: 'degC' } }, 'wrong-unit'],
			[{ ...goodSucrose, sucrose_weighed: { value: '600.4', unit: 'mL' } }, 'wrong-unit'],
			// limits.ts: more decimals than the field has are refused, never rounded away.
			[{ ...goodSucrose, sucrose_weighed: '600.45' }, 'too-many-decimals'],
			[{ sucrose_lot: 'T-SUC-OK', sucrose_balance: 'T-BAL6-OK' }, 'required'],
			[{ ...goodSucrose, sucrose_qty: '1' }, 'wrong-type']
		];
		for (const [values, code] of bad) {
			const err = await enter(operator, id, 'weigh_sucrose', values).catch((e) => e);
			expect(err, code).toBeInstanceOf(ExecutionError);
			expect(err.status).toBe(400);
			expect(err.issues.map((i: { code: string }) => i.code)).toContain(code);
			expect(err.message.length).toBeGreaterThan(10);
		}
		expect(await countRows(id)).toEqual({ entries: 0, signatures: 0 });
		expect(await versionOf(id)).toEqual({ version: 1, status: 'issued' });
	});

	// units.ts (NIST SP 811): 0.6004 kg = 600.4 g exactly; a value typed in another unit of the quantity is converted and stored canonical.
	test('a value typed in another unit is converted to the field unit and stored canonical', async () => {
		const id = await insertBatch(db);
		const r = await enter(operator, id, 'weigh_sucrose', { ...goodSucrose, sucrose_weighed: { value: '0.6004', unit: 'kg' } });
		const [row] = await db.select().from(stepEntry).where(eq(stepEntry.id, r.entryId));
		expect((row.values as Record<string, unknown>).sucrose_weighed).toEqual({ kind: 'number', text: '0.6004', unit: 'kg', value: 600.4, canonical: { value: 600.4, unit: 'g' } });
	});

	// 21 CFR 211.100(b), 211.192: an out-of-limit value needs a comment, is flagged and raises a deviation.
	test('an out-of-limit value is refused without a comment, and with one is flagged and raises a deviation', async () => {
		const id = await insertBatch(db);
		// 605.0 g is above 603.0 g (600.0 g + 0.5 %).
		const values = { ...goodSucrose, sucrose_weighed: '605.0' };
		expect(await outcome(enter(operator, id, 'weigh_sucrose', values))).toBe('400 comment-required');
		expect(await countRows(id)).toEqual({ entries: 0, signatures: 0 });
		const r = await enter(operator, id, 'weigh_sucrose', values, { comment: 'Overshot while pouring; supervisor informed.' });
		expect(r.outOfLimits).toEqual(['sucrose_weighed']);
		expect(r.deviations).toHaveLength(1);
		expect(r.deviations[0]).toMatch(/^DEV-\d{4}-\d{4}$/);
		const [d] = await db.select().from(deviation).where(eq(deviation.batchId, id));
		expect(d).toMatchObject({ stepKey: 'weigh_sucrose', entryId: r.entryId, source: 'auto', kind: 'out-of-limit', status: 'open' });
		expect(d.description).toContain('605.0 g is above');
		const view = await buildBatchView(db, (await loadBatchRecords(db, id))!);
		const step = view.sections[0].steps[0];
		expect(step.state).toBe('needs-attention');
		expect(step.current?.outOfLimits).toEqual(['sucrose_weighed']);
		expect(step.deviations.map((x) => x.number)).toEqual(r.deviations);
	});

	// 21 CFR 211.188(b)(11), Annex 11 clause 6: critical steps need a second person (a supervisor); nobody verifies their own entry.
	test('a critical step is verified by a different supervisor, never by the performer', async () => {
		const id = await insertBatch(db);
		expect(await outcome(verifyStep(db, { user: supervisor.user, session: supervisor.session, address: 'x', batchId: id, stepKey: 'weigh_sucrose', credentials: credentialsOf(supervisor) }))).toBe('409 not-performed');
		await enter(operator, id, 'weigh_sucrose', goodSucrose);
		// An operator may not verify (batch.verify is the supervisor's).
		expect(await outcome(verifyStep(db, { user: operator2.user, session: operator2.session, address: 'x', batchId: id, stepKey: 'weigh_sucrose', credentials: credentialsOf(operator2) }))).toBe('403 wrong-role');
		const r = await verifyStep(db, { user: supervisor.user, session: supervisor.session, address: 'x', batchId: id, stepKey: 'weigh_sucrose', credentials: credentialsOf(supervisor) });
		expect(r.version).toBe(3);
		const [v] = await db.select().from(stepVerification).where(eq(stepVerification.batchId, id));
		const [sig] = await db.select().from(signature).where(eq(signature.id, v.signatureId));
		expect(sig.meaning).toBe('verified');
		expect(sig.signerId).toBe(supervisor.user.id);
		expect(await outcome(verifyStep(db, { user: supervisor.user, session: supervisor.session, address: 'x', batchId: id, stepKey: 'weigh_sucrose', credentials: credentialsOf(supervisor) }))).toBe('409 already-verified');
		expect(await outcome(verifyStep(db, { user: supervisor.user, session: supervisor.session, address: 'x', batchId: id, stepKey: 'thaw_ds', credentials: credentialsOf(supervisor) }))).toBe('400 not-critical');
		const view = await buildBatchView(db, (await loadBatchRecords(db, id))!);
		expect(view.sections[0].steps[0].state).toBe('verified');
		expect(view.sections[0].steps[0].verification?.verifiedByName).toBe(supervisor.user.name);
	});

	test('a supervisor cannot verify a step they performed themselves', async () => {
		const id = await insertBatch(db);
		// adjust_bulk may be performed by a supervisor; walk the batch there with the operator first.
		await enter(operator, id, 'weigh_sucrose', goodSucrose);
		await enter(operator, id, 'weigh_buffer', { histidine_lot: 'T-HIS-OK', histidine_hcl_lot: 'T-HHC-OK', polysorbate_lot: 'T-PS80-OK', buffer_balance: 'T-BAL220-OK', histidine_weighed: '9.36', histidine_hcl_weighed: '12.60', polysorbate_weighed: '1.200' });
		await enter(operator, id, 'thaw_ds', { ds_lot: 'T-DS-OK', ds_cold_room: 'T-COLD-OK', ds_concentration: '50.0', ds_thawed_at: new Date(Date.now() - 60_000).toISOString() });
		await enter(operator, id, 'prepare_buffer', { compounding_vessel: 'T-VSL-OK', wfi_temperature: '20.0', solids_dissolved: true });
		// ds_volume = 12 L × 20 mg/mL / 50.0 mg/mL = 4800 mL.
		await enter(operator, id, 'add_ds', { ds_volume_added: '4800', mixing_time: '15' });
		// Target bulk mass = 12 L × 1.0250 g/mL = 12.300 kg (± 0.5 %).
		const r = await enter(supervisor, id, 'adjust_bulk', { ph_meter: 'T-PH-OK', bulk_ph_value: '6.00', density_meter: 'T-DNS-OK', bulk_density: '1.0250', bulk_scale: 'T-SCL-OK', bulk_mass: '12.300', bulk_appearance: 'clear' });
		expect(r.outOfLimits).toEqual([]);
		expect(await outcome(verifyStep(db, { user: supervisor.user, session: supervisor.session, address: 'x', batchId: id, stepKey: 'adjust_bulk', credentials: credentialsOf(supervisor) }))).toBe('403 own-entry');
		// add_ds is the operator's step (roles in the master): the supervisor may not record it at all.
		const v = (await versionOf(id)).version;
		expect(await outcome(enter(supervisor, id, 'add_ds', { ds_volume_added: '4801', mixing_time: '15' }, { expectedVersion: v, reasonCode: 'transcription-error' }))).toBe('403 wrong-role');
	});

	// EU GMP Ch. 4.9: corrections keep the original, give a reason and are signed; 11.10(e): earlier values never obscured.
	test('a correction supersedes the entry with a reason code and a new signature; the old entry stays', async () => {
		const id = await insertBatch(db);
		const first = await enter(operator, id, 'weigh_sucrose', goodSucrose);
		const fixed = { ...goodSucrose, sucrose_weighed: '600.3' };
		// 409 without a version: the person must have seen what they correct.
		expect(await outcome(enter(operator, id, 'weigh_sucrose', fixed))).toBe('409 already-performed');
		expect(await outcome(enter(operator, id, 'weigh_sucrose', fixed, { expectedVersion: first.version }))).toBe('400 reason-required');
		expect(await outcome(enter(operator, id, 'weigh_sucrose', fixed, { expectedVersion: first.version, reasonCode: 'made-up' }))).toBe('400 unknown-reason');
		const c = await enter(operator2, id, 'weigh_sucrose', fixed, { expectedVersion: first.version, reasonCode: 'transcription-error', comment: 'Read 600.3 off the print-out.' });
		expect(c.correction).toBe(true);
		const rows = await db.select().from(stepEntry).where(eq(stepEntry.batchId, id));
		expect(rows).toHaveLength(2);
		const newer = rows.find((r) => r.id === c.entryId)!;
		expect(newer.supersedes).toBe(first.entryId);
		expect(newer.reasonCode).toBe('transcription-error');
		expect(newer.signatureId).not.toBe(rows.find((r) => r.id === first.entryId)!.signatureId);
		const view = await buildBatchView(db, (await loadBatchRecords(db, id))!);
		const step = view.sections[0].steps[0];
		expect(step.history.map((e) => e.id)).toEqual([first.entryId, c.entryId]);
		expect(step.history[0].supersededBy).toBe(c.entryId);
		expect(step.history[1].reasonLabel).toBe('Transcription error');
		expect(step.current?.performedByName).toBe(operator2.user.name);
		// The database itself refuses to change an entry (append-only trigger).
		await expect(db.update(stepEntry).set({ comment: 'x' }).where(eq(stepEntry.id, first.entryId))).rejects.toThrow();
	});

	// Optimistic concurrency: a stale version is refused with 409 and nothing half-written.
	test('a stale version is refused with 409 and nothing is written', async () => {
		const id = await insertBatch(db);
		const first = await enter(operator, id, 'weigh_sucrose', goodSucrose);
		await enter(operator, id, 'thaw_ds', { ds_lot: 'T-DS-OK', ds_cold_room: 'T-COLD-OK', ds_concentration: '50.0', ds_thawed_at: new Date(Date.now() - 60_000).toISOString() });
		const before = await countRows(id);
		const err = await enter(operator2, id, 'weigh_sucrose', { ...goodSucrose, sucrose_weighed: '600.2' }, { expectedVersion: first.version, reasonCode: 'instrument-re-read' }).catch((e) => e);
		expect(err).toBeInstanceOf(ExecutionError);
		expect(err.status).toBe(409);
		expect(err.code).toBe('stale-version');
		expect(err.message).toContain('changed while you were working');
		expect(await countRows(id)).toEqual(before);
		expect(await outcome(verifyStep(db, { user: supervisor.user, session: supervisor.session, address: 'x', batchId: id, stepKey: 'weigh_sucrose', expectedVersion: first.version, credentials: credentialsOf(supervisor) }))).toBe('409 stale-version');
	});

	// EU GMP Ch. 4.8: entries recorded long after the work are flagged late (site setting, 30 min by default).
	test('an entry recorded more than the threshold after the work is flagged late', async () => {
		const id = await insertBatch(db);
		await db.execute(sql`select 1`);
		const workedAt = new Date(Date.now() - 45 * 60_000).toISOString();
		// The fixture batch was issued just now: the work cannot predate issue.
		expect(await outcome(enter(operator, id, 'weigh_sucrose', goodSucrose, { workedAt }))).toBe('400 invalid-input');
		const old = await insertBatch(db);
		await db.update(batch).set({ issuedAt: new Date(Date.now() - 2 * 3600_000) }).where(eq(batch.id, old));
		const r = await enter(operator, old, 'weigh_sucrose', goodSucrose, { workedAt });
		expect(r.late).toBe(true);
		const r2 = await enter(operator, old, 'thaw_ds', { ds_lot: 'T-DS-OK', ds_cold_room: 'T-COLD-OK', ds_concentration: '50.0', ds_thawed_at: new Date(Date.now() - 60_000).toISOString() }, { workedAt: new Date(Date.now() - 10 * 60_000).toISOString() });
		expect(r2.late).toBe(false);
		expect(await outcome(enter(operator, old, 'weigh_buffer', {}, { workedAt: new Date(Date.now() + 3600_000).toISOString() }))).toBe('400 invalid-input');
	});

	test('a wrong password signs nothing; a closed batch takes no entries', async () => {
		const id = await insertBatch(db);
		expect(await outcome(enter(operator, id, 'weigh_sucrose', goodSucrose, { credentials: { method: 'password', username: 'operator', password: 'not-the-password' } }))).toBe('401 bad-credentials');
		expect(await countRows(id)).toEqual({ entries: 0, signatures: 0 });
		await db.update(batch).set({ status: 'released' }).where(eq(batch.id, id));
		expect(await outcome(enter(operator, id, 'weigh_sucrose', goodSucrose))).toBe('423 batch-closed');
	});
});
