import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createHash } from 'node:crypto';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { eq } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { attachment, auditEvent } from '$lib/server/db/schema';
import { downloadAttachment, uploadAttachment } from '$lib/server/batches/attachments';
import { recordStepEntry } from '$lib/server/batches/entries';
import { ExecutionError } from '$lib/server/batches/errors';
import { localBlobStore } from '$lib/server/blobs/store';
import { demoTemplate } from '$lib/domain/fixtures/demo-template';
import { databaseKinds, type TestDatabase } from '../support/databases';
import { addFixtureInventory, credentialsOf, insertBatch, personOf, seededDatabase, type Person } from './support';

// ISO 32000-1 7.5.2: a PDF starts with "%PDF-"; PNG signature from RFC 2083 (89 50 4E 47 0D 0A 1A 0A).
const pdf = new TextEncoder().encode('%PDF-1.7\n% invented test printout\n%%EOF\n');
const png = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 0]);

describe.each(databaseKinds)('step attachments on %s', (kind) => {
	let t: TestDatabase;
	let db: Database;
	let operator: Person;
	const dir = mkdtempSync(join(tmpdir(), 'rimebook-blobs-'));
	const store = localBlobStore(dir);
	beforeAll(async () => {
		t = await seededDatabase(kind);
		db = t.handle.db;
		await addFixtureInventory(db);
		operator = await personOf(db, 'operator');
	});
	afterAll(async () => {
		await t?.dispose();
		rmSync(dir, { recursive: true, force: true });
	});

	test('a file is stored under its SHA-256, audited on upload and download, and can fill an attachment field', async () => {
		// The filter test may run at any time in this variant of the demo, so the entry reaches the file check.
		const template = structuredClone(demoTemplate);
		template.sections[2].steps[0].mayRunOutOfOrder = true;
		const id = await insertBatch(db, { template });
		const up = await uploadAttachment(db, store, { user: operator.user, batchId: id, stepKey: 'pre_use_test', fieldKey: 'pre_test_printout', filename: 'bubble-point.pdf', contentType: 'application/pdf', bytes: pdf });
		// FIPS 180-4 SHA-256 via node:crypto, the reference implementation here.
		expect(up.sha256).toBe(createHash('sha256').update(pdf).digest('hex'));
		const got = await downloadAttachment(db, store, operator.user, id, up.id);
		expect(Buffer.from(got.bytes).equals(Buffer.from(pdf))).toBe(true);
		const events = await db.select().from(auditEvent).where(eq(auditEvent.entityId, up.id));
		expect(events.map((e) => e.action).sort()).toEqual(['attachment.download', 'attachment.upload']);
		// The entry checks the file is this step's, of an accepted type.
		const err = await recordStepEntry(db, { user: operator.user, session: operator.session, address: 'x', batchId: id, stepKey: 'pre_use_test', values: { pre_test_printout: 'not-an-id' }, credentials: credentialsOf(operator) }).catch((e) => e);
		expect(err.issues.map((i: { field: string }) => i.field)).toContain('pre_test_printout');
		const ok = await recordStepEntry(db, { user: operator.user, session: operator.session, address: 'x', batchId: id, stepKey: 'pre_use_test', values: { filter_lot: 'FLT-88214', integrity_tester: 'FIT-02', pre_bubble_point: '3.60', pre_test_printout: up.id }, credentials: credentialsOf(operator) }).catch((e) => e);
		// FLT-88214 / FIT-02 are demo items dated in scenario.ts; the file itself must not be the problem.
		if (ok instanceof ExecutionError) expect(ok.issues.map((i) => i.field)).not.toContain('pre_test_printout');
		else expect(ok.outOfLimits).toEqual([]);
	});

	test('a file too large or of a refused type is refused and nothing is written', async () => {
		const id = await insertBatch(db);
		const big = new Uint8Array(20 * 1024 * 1024 + 1);
		big.set(pdf);
		const tooLarge = await uploadAttachment(db, store, { user: operator.user, batchId: id, stepKey: 'pre_use_test', fieldKey: 'pre_test_printout', filename: 'big.pdf', contentType: 'application/pdf', bytes: big }).catch((e) => e);
		expect(tooLarge).toBeInstanceOf(ExecutionError);
		expect([tooLarge.status, tooLarge.code]).toEqual([413, 'file-too-large']);
		const exe = await uploadAttachment(db, store, { user: operator.user, batchId: id, stepKey: 'pre_use_test', filename: 'tool.exe', contentType: 'application/x-msdownload', bytes: new Uint8Array([0x4d, 0x5a]) }).catch((e) => e);
		expect([exe.status, exe.code]).toEqual([415, 'file-type-refused']);
		// The cycle log field takes text/csv only; a PNG is refused there.
		const wrongField = await uploadAttachment(db, store, { user: operator.user, batchId: id, stepKey: 'lyo_cycle', fieldKey: 'cycle_log', filename: 'x.png', contentType: 'image/png', bytes: png }).catch((e) => e);
		expect(wrongField.code).toBe('file-type-refused');
		// Bytes that are not what the type claims are refused.
		const fake = await uploadAttachment(db, store, { user: operator.user, batchId: id, stepKey: 'pre_use_test', filename: 'fake.pdf', contentType: 'application/pdf', bytes: png }).catch((e) => e);
		expect(fake.code).toBe('file-type-refused');
		expect(await db.select().from(attachment).where(eq(attachment.batchId, id))).toEqual([]);
	});
});
