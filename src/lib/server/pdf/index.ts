import { eq } from 'drizzle-orm';
import { canonicalJson } from '$lib/domain/canonical';
import { messagesFor, type Locale, type Messages } from '$lib/i18n';
import type { Database } from '../db/client';
import { batch } from '../db/schema';
import type { Actor } from '../audit/ledger';
import { createCheckpoint } from '../audit/checkpoint';
import { isFiltered, type TrailFilter } from '../audit/trail';
import { runUnitOfWork } from '../work';
import { loadSigningIdentity, type SigningIdentity } from '../site/certificate';
import { Flow, MUTED } from './layout';
import { drawRecord } from './record';
import { drawAuditTrail, siteTime } from './audit-trail';
import { loadRecordModel, readTrail } from './record-data';
import { attachCanonical, signDocument } from './sign';
import type { AuditReportModel, RecordModel } from './model';

export type { RecordModel, AuditReportModel } from './model';

export interface PdfContext {
	db: Database;
	actor: Actor;
	site: { name: string; timeZone: string };
	locale?: Locale;
}

export interface RenderedPdf {
	bytes: Buffer;
	filename: string;
	/** SHA-256 of the attached canonical JSON */
	attachmentSha256: string;
}

/** Most events an audit report prints; the JSONL export has no limit. */
export const REPORT_EVENT_LIMIT = 20_000;

/** Lays out, attaches the electronic original and signs a batch record (no I/O besides the identity). */
export async function renderRecordDocument(m: RecordModel, identity: SigningIdentity, w: Messages['pdf']): Promise<RenderedPdf> {
	const flow = await Flow.create({
		header: w.recordHeader({ site: m.site.name, batch: m.view.number, product: m.view.product }),
		pageWords: w.page,
		footerLeft: w.footer({ at: siteTime(m.generatedAt, m.site.timeZone), by: m.generatedBy })
	});
	const name = `batch-record-${safeName(m.view.number)}.json`;
	const sha256 = await attachCanonical(flow.doc, name, m.canonical, `${w.recordTitle} ${m.view.number} (RFC 8785)`);
	drawRecord(flow, m, w, { name, sha256 }, identity);
	flow.finish();
	setInfo(flow, `${w.recordTitle} ${m.view.number}`, m);
	const bytes = await signDocument(flow.doc, identity, { reason: `${w.recordTitle} ${m.view.number}`, location: m.site.name, name: identity.subject, contact: m.site.name, at: new Date(m.generatedAt) });
	return { bytes, filename: `batch-record-${safeName(m.view.number)}.pdf`, attachmentSha256: sha256 };
}

export async function renderAuditDocument(m: AuditReportModel, identity: SigningIdentity, w: Messages['pdf']): Promise<RenderedPdf> {
	const flow = await Flow.create({ header: w.auditHeader({ site: m.site.name }), pageWords: w.page, footerLeft: w.footer({ at: siteTime(m.generatedAt, m.site.timeZone), by: m.generatedBy }) });
	const name = `audit-trail-${m.audit.checkpoint?.size ?? 0}.json`;
	const sha256 = await attachCanonical(flow.doc, name, m.canonical, `${w.auditTitle} (RFC 8785)`);
	flow.heading(w.auditTitle, 1);
	const filter = m.audit.filter && Object.keys(m.audit.filter).length ? Object.entries(m.audit.filter).map(([k, v]) => `${k}=${v}`).join(', ') : w.audit.noFilter;
	for (const [k, v] of [
		[w.audit.filter, filter],
		[w.audit.coverage, m.audit.filter && Object.keys(m.audit.filter).length ? w.audit.filtered : w.audit.complete],
		[w.cover.site, m.site.name],
		[w.cover.timeZone, m.site.timeZone],
		[w.cover.attachmentName, name],
		[w.cover.attachmentHash, sha256],
		[w.cover.certificate, identity.fingerprint]
	] as const)
		flow.row([{ text: k, bold: true }, { text: v }], [30, 70]);
	flow.gap(6);
	drawAuditTrail(flow, m.audit, m.site.timeZone, w.audit);
	flow.text('', { color: MUTED });
	flow.finish();
	setInfo(flow, w.auditTitle, m);
	const bytes = await signDocument(flow.doc, identity, { reason: w.auditTitle, location: m.site.name, name: identity.subject, contact: m.site.name, at: new Date(m.generatedAt) });
	const stamp = m.generatedAt.slice(0, 19).replace(/[:T]/g, '-');
	return { bytes, filename: `audit-trail-${stamp}-${m.audit.checkpoint?.size ?? 0}.pdf`, attachmentSha256: sha256 };
}

function setInfo(flow: Flow, title: string, m: { site: { name: string }; generatedAt: string }): void {
	flow.doc.setTitle(title);
	flow.doc.setAuthor(m.site.name);
	flow.doc.setCreator('Rimebook');
	flow.doc.setProducer('Rimebook (pdf-lib)');
	flow.doc.setCreationDate(new Date(m.generatedAt));
	flow.doc.setModificationDate(new Date(m.generatedAt));
}

function safeName(text: string): string {
	return text.replace(/[^A-Za-z0-9._-]+/g, '_');
}

/**
 * GET /api/batches/<id>/record.pdf: the print is recorded first (who made a copy of which record,
 * 21 CFR 11.10(e)), then a checkpoint is signed so the appendix's events, the print's own event
 * included, are covered by the tree head it shows. Null: no such batch (nothing is recorded).
 */
export async function renderBatchRecordPdf(ctx: PdfContext, batchId: string): Promise<RenderedPdf | null> {
	const [exists] = await ctx.db.select({ id: batch.id }).from(batch).where(eq(batch.id, batchId));
	if (!exists) return null;
	await runUnitOfWork(ctx.db, ctx.actor, (uow) => uow.audit({ action: 'batch.record.print', entityType: 'batch', entityId: batchId, batchId, after: { format: 'pdf' } }));
	const checkpoint = await createCheckpoint(ctx.db);
	const identity = await loadSigningIdentity(ctx.db, ctx.site.name);
	const generatedAt = new Date().toISOString();
	const model = await loadRecordModel(ctx.db, batchId, { site: ctx.site, generatedAt, generatedBy: ctx.actor, checkpoint });
	if (!model) return null;
	return renderRecordDocument(model, identity, messagesFor(ctx.locale ?? 'en').pdf);
}

/** GET /api/audit/report.pdf: audited like the JSONL/CSV export (audit/export.ts), then signed. */
export async function renderAuditReportPdf(ctx: PdfContext, filter: TrailFilter): Promise<RenderedPdf> {
	const filtered = isFiltered(filter);
	await runUnitOfWork(ctx.db, ctx.actor, (uow) => uow.audit({ action: 'audit.export', entityType: 'audit-trail', entityId: null, after: { format: 'pdf', filter, coverage: filtered ? 'filtered' : 'complete' } }));
	const checkpoint = await createCheckpoint(ctx.db);
	const identity = await loadSigningIdentity(ctx.db, ctx.site.name);
	const generatedAt = new Date().toISOString();
	const trail = await readTrail(ctx.db, filter, ctx.site.timeZone, checkpoint?.size ?? 0, REPORT_EVENT_LIMIT);
	const cleanFilter = Object.fromEntries(Object.entries(filter).filter((e): e is [string, string] => typeof e[1] === 'string'));
	const canonical = canonicalJson({
		type: 'rimebook.audit-report',
		version: 1,
		generatedAt,
		generatedBy: ctx.actor,
		site: ctx.site,
		filter: cleanFilter,
		coverage: filtered ? 'filtered' : 'complete',
		checkpoint,
		total: trail.total,
		events: trail.stored
	});
	const model: AuditReportModel = { site: ctx.site, generatedAt, generatedBy: ctx.actor.name, audit: { events: trail.rows, total: trail.total, checkpoint, filter: cleanFilter }, canonical };
	return renderAuditDocument(model, identity, messagesFor(ctx.locale ?? 'en').pdf);
}
