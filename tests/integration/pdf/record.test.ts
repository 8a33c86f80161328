import { afterAll, beforeAll, describe, expect, test, vi } from 'vitest';
import { createHash } from 'node:crypto';
import { desc, eq } from 'drizzle-orm';

// The site's zone is not UTC here, so a manifestation's zone is visibly printed (Annex 11, 14).
vi.hoisted(() => {
	process.env.RIMEBOOK_SITE_TIMEZONE = 'Europe/Berlin';
});

import type { Database } from '$lib/server/db/client';
import { auditEvent, batch, batchDisposition, cycleRun, signature } from '$lib/server/db/schema';
import { runUnitOfWork } from '$lib/server/work';
import { randomUUID } from 'node:crypto';
import { recordStepEntry, type StepEntryRequest } from '$lib/server/batches/entries';
import { verifyStep } from '$lib/server/batches/verify';
import { renderBatchRecordPdf, type RenderedPdf } from '$lib/server/pdf';
import { getSiteInfo } from '$lib/server/site/settings';
import { CERTIFICATE_SETTING } from '$lib/server/site/certificate';
import { canonicalJson } from '$lib/domain/canonical';
import { formatManifestation } from '$lib/domain/signature';
import { clearSeriesCache } from '$lib/server/cycles/series-store';
import { setting } from '$lib/server/db/schema';
import { databaseKinds, type TestDatabase } from '../support/databases';
import { addFixtureInventory, credentialsOf, insertBatch, personOf, refresh, seededDatabase, type Person } from '../batches/support';
import { attachments, byteRangeOf, pageCount, pagesOf, pdfsig, saveTemp, textOf } from './support';

/**
 * Issue 8, "The executed batch record as a PDF": a batch executed through the services (an
 * out-of-limit weighing that raises a deviation, its correction with a reason, a second-person
 * verification) is printed, and the file is read back with poppler (an independent PDF reader):
 * its text, its signature (pdfsig) and its attached electronic original (pdfdetach).
 */
const goodSucrose = { sucrose_lot: 'T-SUC-OK', sucrose_balance: 'T-BAL6-OK', sucrose_weighed: '600.3' };
// Non-ASCII on purpose: every character must print (Noto Sans embedded), not only WinAnsi.
const COMMENT = 'Anzeige übernommen: 600,3 g bei 21 °C, Toleranz ≤ ±0,5 %, Waage µ-genau';

describe.each(databaseKinds)('the executed batch record PDF on %s', (kind) => {
	let t: TestDatabase;
	let db: Database;
	let operator: Person;
	let operator2: Person;
	let supervisor: Person;
	let batchId: string;
	let deviationNumber: string;
	let pdf: RenderedPdf;
	let path: string;
	let text: string;

	function enter(who: Person, stepKey: string, values: Record<string, unknown>, extra: Partial<StepEntryRequest> = {}) {
		return recordStepEntry(db, { user: who.user, session: who.session, address: '10.1.0.1', batchId, stepKey, values, credentials: credentialsOf(who), ...extra });
	}

	beforeAll(async () => {
		t = await seededDatabase(kind);
		db = t.handle.db;
		await addFixtureInventory(db);
		operator = await personOf(db, 'operator');
		operator2 = await personOf(db, 'operator2');
		supervisor = await personOf(db, 'supervisor');
		batchId = await insertBatch(db, { number: 'PDF-TEST-0001' });
		// 605.0 g is above 603.0 g (12 L × 50 mg/mL = 600.0 g + 0.5 %, demo template).
		const first = await enter(operator, 'weigh_sucrose', { ...goodSucrose, sucrose_weighed: '605.0' }, { comment: 'Overshot while pouring.' });
		deviationNumber = first.deviations[0];
		operator2 = await refresh(db, operator2);
		await enter(operator2, 'weigh_sucrose', goodSucrose, { expectedVersion: first.version, reasonCode: 'transcription-error', comment: COMMENT });
		await verifyStep(db, { user: supervisor.user, session: supervisor.session, address: '10.1.0.2', batchId, stepKey: 'weigh_sucrose', credentials: credentialsOf(supervisor) });
		const site = await getSiteInfo(db);
		pdf = (await renderBatchRecordPdf({ db, actor: { id: operator.user.id, name: operator.user.name }, site: { name: site.name, timeZone: 'Europe/Berlin' } }, batchId))!;
		path = saveTemp(pdf.bytes, 'record.pdf');
		text = textOf(path);
	}, 240_000);
	afterAll(async () => {
		clearSeriesCache();
		await t?.dispose();
	});

	// 21 CFR 211.188(b): the record names product, batch, master and what was recorded, with units and limits.
	test('the cover and the steps print the batch, master hash, entries, units and limits', async () => {
		const [b] = await db.select().from(batch).where(eq(batch.id, batchId));
		expect(text).toContain('Executed batch record PDF-TEST-0001');
		expect(text).toContain(b.snapshotHash);
		expect(text).toContain('600.3 g');
		// Resolved limits at 12 L (demo template: 600.0 g ± 0.5 %).
		expect(text).toContain('597.0 … 603.0 g');
		expect(text).toContain('OUT OF LIMITS');
		expect(text).toContain(COMMENT);
	});

	// 21 CFR 11.50(a): printed name, date and time (with its zone), and meaning of every signature.
	test('every signature is manifested with printed name, meaning and time zone', async () => {
		const sigs = await db.select().from(signature).where(eq(signature.batchId, batchId));
		expect(sigs.map((s) => s.meaning).sort()).toEqual(['performed', 'performed', 'verified']);
		for (const s of sigs) {
			const m = formatManifestation(s);
			expect(m.when).toMatch(/\(Europe\/Berlin\)$/);
			expect(text).toContain(m.text);
		}
		expect(text).toContain(operator2.user.name);
		expect(text).toContain(supervisor.user.name);
	});

	// EU GMP Ch. 4.9 and 11.10(e): the old value stays readable with the reason; Annex 11, 8.2: changes flagged.
	test('the correction shows the old value, its reason and the changed-after-entry flag; the deviation is listed', async () => {
		expect(text).toContain('605.0 g');
		expect(text).toContain('Superseded value');
		expect(text).toContain('Correction, reason: Transcription error');
		expect(text).toContain('Changed after first entry (Annex 11, 8.2)');
		expect(deviationNumber).toMatch(/^DEV-\d{4}-\d{4}$/);
		expect(text).toContain(deviationNumber);
	});

	// 21 CFR 11.10(b) (complete copy): every page says which page of how many it is.
	test('every page has the header and "Page N of M"', async () => {
		const pages = pagesOf(path);
		const total = pageCount(path);
		expect(pages).toHaveLength(total);
		expect(total).toBeGreaterThan(3);
		pages.forEach((p, i) => {
			expect(p).toContain(`Page ${i + 1} of ${total}`);
			expect(p).toContain('Executed batch record PDF-TEST-0001');
		});
	});

	// 21 CFR 11.10(e): the appendix carries the batch's audit trail and a signed checkpoint that covers it.
	test('the audit-trail appendix lists the batch events and the latest checkpoint, including the print itself', async () => {
		const [print] = await db.select().from(auditEvent).where(eq(auditEvent.action, 'batch.record.print')).orderBy(desc(auditEvent.seq)).limit(1);
		expect(print.entityId).toBe(batchId);
		expect(text).toContain('Appendix: audit trail of this batch');
		expect(text).toContain('batch.record.print');
		expect(text).toContain('batch.step.perform');
		const detached = JSON.parse(attachments(path).files[0].bytes.toString('utf8'));
		expect(detached.audit.checkpoint.size).toBeGreaterThanOrEqual(Number(print.seq));
		expect(text).toContain(detached.audit.checkpoint.root);
		expect(text).toContain(detached.audit.checkpoint.signature.slice(0, 40));
	});

	// ISO 32000-1 12.8 with RFC 5652 (CMS SignedData, adbe.pkcs7.detached): pdfsig validates; one byte changed fails.
	test('pdfsig finds a valid signature, and a digest mismatch after one changed byte', async () => {
		const report = pdfsig(path);
		expect(report).toContain('Signature is Valid');
		const [, len1] = byteRangeOf(pdf.bytes);
		const tampered = Buffer.from(pdf.bytes);
		const at = Math.floor(len1 / 2);
		tampered[at] = tampered[at] ^ 0x01;
		const bad = pdfsig(saveTemp(tampered, 'tampered.pdf'));
		expect(bad).not.toContain('Signature is Valid');
		expect(bad).toMatch(/Digest Mismatch|Signature is Invalid/);
		// The self-signed certificate was made once, and its creation audited (11.10(e)).
		const [cert] = await db.select().from(setting).where(eq(setting.key, CERTIFICATE_SETTING));
		expect(cert).toBeDefined();
		const made = await db.select().from(auditEvent).where(eq(auditEvent.action, 'pdf.signing-certificate.create'));
		expect(made).toHaveLength(1);
		expect(JSON.stringify(made[0].after)).not.toContain('PRIVATE KEY');
	});

	// RFC 8785: the attachment is the record's canonical JSON; its SHA-256 is printed on the cover.
	test('the attached electronic original is RFC 8785 JSON whose SHA-256 the cover prints', async () => {
		const { list, files } = attachments(path);
		expect(list).toContain('batch-record-PDF-TEST-0001.json');
		expect(files).toHaveLength(1);
		const bytes = files[0].bytes;
		const sha = createHash('sha256').update(bytes).digest('hex');
		expect(sha).toBe(pdf.attachmentSha256);
		expect(text).toContain(sha);
		const parsed = JSON.parse(bytes.toString('utf8'));
		// Canonical text canonicalises to itself (RFC 8785 3.2).
		expect(canonicalJson(parsed)).toBe(bytes.toString('utf8'));
		expect(parsed.batch.number).toBe('PDF-TEST-0001');
		expect(parsed.entries).toHaveLength(2);
		expect(parsed.entries.find((e: { supersedes: string | null }) => e.supersedes).comment).toBe(COMMENT);
		expect(parsed.signatures).toHaveLength(3);
	});

	// Issue 7 into the record: the demo batch's freeze-drying run is drawn with its recipe bands and phases.
	test('the demo batch prints its freeze-drying cycle as a chart with phases and the excursion deviation', async () => {
		// The demo scenario imports one run on LYO-01 for the demo batch (seed/cycles.ts).
		const [run] = await db.select().from(cycleRun).limit(1);
		const demo = { id: run.batchId! };
		const site = await getSiteInfo(db);
		const r = (await renderBatchRecordPdf({ db, actor: { id: null, name: 'Test' }, site: { name: site.name, timeZone: 'Europe/Berlin' } }, demo.id))!;
		const p = saveTemp(r.bytes, 'demo.pdf');
		const demoText = textOf(p);
		expect(demoText).toContain('Freeze-drying cycle');
		expect(demoText).toContain('LYO-01');
		expect(demoText).toContain('Primary drying');
		expect(demoText).toContain('shelf acceptable range');
		expect(demoText).toMatch(/DEV-\d{4}-\d{4}/);
		expect(demoText).not.toContain('No cycle run is recorded for this batch.');
		expect(pdfsig(p)).toContain('Signature is Valid');
	});

	// 21 CFR 211.192 and 11.50: the cover names the disposition, who signed it with which meaning, and QA's comment.
	// The disposition is written here as REV's service stores it (a "released" signature and a
	// batch_disposition row), so only the printing is under test.
	test('a released batch prints its disposition signature (meaning Released) and comment on the cover', async () => {
		const qa = await personOf(db, 'qa');
		const id = await insertBatch(db, { number: 'PDF-TEST-0002' });
		const sigId = randomUUID();
		const at = new Date().toISOString();
		await runUnitOfWork(db, { id: qa.user.id, name: qa.user.name }, async (uow) => {
			await uow.tx.insert(signature).values({ id: sigId, signerId: qa.user.id, printedName: qa.user.name, meaning: 'released', at, timeZone: 'Europe/Berlin', method: 'password', entityType: 'batch', entityId: id, batchId: id, contentHash: '0'.repeat(64) });
			await uow.tx.insert(batchDisposition).values({ batchId: id, decision: 'released', comment: 'Freigegeben: alle Prüfungen ≤ Grenzwert', signatureId: sigId, decidedBy: qa.user.id, decidedByName: qa.user.name, decidedAt: at });
			await uow.tx.update(batch).set({ status: 'released' }).where(eq(batch.id, id));
			await uow.audit({ action: 'test.disposition', entityType: 'batch', entityId: id, batchId: id });
		});
		const site = await getSiteInfo(db);
		const r = (await renderBatchRecordPdf({ db, actor: { id: qa.user.id, name: qa.user.name }, site: { name: site.name, timeZone: 'Europe/Berlin' } }, id))!;
		const cover = pagesOf(saveTemp(r.bytes, 'released.pdf'))[0];
		const [row] = await db.select().from(signature).where(eq(signature.id, sigId));
		expect(cover).toContain('Batch status Released');
		expect(cover).toContain(formatManifestation(row).text);
		expect(formatManifestation(row).text).toContain('· Released ·');
		expect(cover).toContain('Freigegeben: alle Prüfungen ≤ Grenzwert');
	});
});
