import { rgb } from 'pdf-lib';
import type { Field } from '$lib/schemas/template';
import type { StoredValue } from '$lib/domain/batch/values';
import { defaultPreferences } from '$lib/domain/batch/preferences';
import { formatManifestation, type Manifestation, type SignatureFacts } from '$lib/domain/signature';
import type { Messages } from '$lib/i18n';
import { formatBounds, formatStored, unitLabel } from '$lib/components/batch/format';
import type { EntryView, StepView } from '../batches/query';
import { ALERT, MUTED, type Flow } from './layout';
import { drawCycleChart } from './chart';
import { drawAuditTrail, siteTime } from './audit-trail';
import type { RecordModel } from './model';

type Words = Messages['pdf'];

const FIELD_SHARES = [27, 35, 20, 18] as const;
const HEAD_FILL = rgb(0.93, 0.94, 0.96);

/**
 * The content of the executed batch record (21 CFR 211.188: a complete record of each significant
 * step; 11.50: every signature with printed name, date and time, meaning). Pure drawing: the
 * model comes from record-data.ts.
 */
export function drawRecord(flow: Flow, m: RecordModel, w: Words, attachment: { name: string; sha256: string }, certificate: { fingerprint: string }): void {
	drawCover(flow, m, w, attachment, certificate);
	flow.newPage();
	for (const section of m.view.sections) {
		flow.heading(w.steps.section({ title: section.title }), 1);
		for (const step of section.steps) drawStep(flow, step, m, w);
	}
	flow.newPage();
	flow.heading(w.deviations.title, 1);
	drawDeviations(flow, m, w);
	flow.heading(w.signatures.title, 1);
	drawSignatures(flow, m, w);
	flow.heading(w.chart.title, 1);
	if (m.charts.length === 0) flow.text(w.chart.none, { color: MUTED });
	for (const chart of m.charts) drawCycleChart(flow, chart, w.chart);
	flow.newPage();
	flow.heading(w.audit.appendix, 1);
	drawAuditTrail(flow, m.audit, m.site.timeZone, w.audit);
}

const manifestations = new WeakMap<SignatureFacts, Manifestation>();

/** 21 CFR 11.50: the one manifestation text of the app (domain/signature.ts), once per signature. */
function manifestationOf(sig: SignatureFacts): Manifestation {
	let m = manifestations.get(sig);
	if (!m) manifestations.set(sig, (m = formatManifestation(sig)));
	return m;
}

function manifest(sig: SignatureFacts): string {
	return manifestationOf(sig).text;
}

function drawCover(flow: Flow, m: RecordModel, w: Words, attachment: { name: string; sha256: string }, certificate: { fingerprint: string }): void {
	const v = m.view;
	const c = w.cover;
	flow.heading(`${w.recordTitle} ${v.number}`, 1);
	flow.gap(4);
	const rows: [string, string][] = [
		[c.site, m.site.name],
		[c.product, `${v.product} (${v.productCode})`],
		[c.strength, v.strength],
		[c.batch, v.number],
		[c.batchSize, `${v.batchSize.value} ${unitLabel(v.batchSize.unit)}`],
		[c.master, m.master ? c.masterVersion(m.master) : v.masterRecordId],
		[c.snapshotHash, v.snapshotHash],
		[c.status, `${w.statuses[v.status] ?? v.status} · ${c.progress({ done: v.progress.done, total: v.progress.total })}`],
		[c.issued, v.issueSignature ? manifest(v.issueSignature) : siteTime(v.issuedAt, m.site.timeZone)]
	];
	for (const [k, value] of rows) flow.row([{ text: k, bold: true }, { text: value }], [30, 70]);
	const dispositions = m.dispositions.map((s) => manifest(s));
	flow.row([{ text: c.disposition, bold: true }, { text: dispositions.length ? dispositions.join('\n') : c.noDisposition, bold: dispositions.length > 0 }], [30, 70]);
	if (m.dispositionComment) flow.row([{ text: c.dispositionComment, bold: true }, { text: m.dispositionComment }], [30, 70]);
	flow.row([{ text: c.attachmentName, bold: true }, { text: attachment.name }], [30, 70]);
	flow.row([{ text: c.attachmentHash, bold: true }, { text: attachment.sha256 }], [30, 70]);
	flow.row([{ text: c.certificate, bold: true }, { text: certificate.fingerprint }], [30, 70]);
	flow.row([{ text: c.timeZone, bold: true }, { text: m.site.timeZone }], [30, 70]);
	if (v.unboundSignatures > 0) flow.text(c.unbound({ count: v.unboundSignatures }), { bold: true, color: ALERT });
}

function valueText(value: StoredValue | undefined, field: Field, entry: EntryView, m: RecordModel, w: Words): string {
	if (field.kind === 'calculated' || field.kind === 'yield') {
		const calc = entry.calculations[field.key] as { reported?: number; unit?: string; missing?: string[] } | undefined;
		if (value === undefined && calc && calc.reported !== undefined) return `${calc.reported} ${unitLabel(calc.unit ?? '')}`.trim();
	}
	return formatStored(value, field, defaultPreferences, { yes: w.steps.yes, no: w.steps.no, when: (iso) => siteTime(iso, m.site.timeZone) });
}

function limitsText(field: Field, m: RecordModel): string {
	const b = m.bounds[field.key];
	if (!b || !('unit' in field)) return '';
	const f = field as { unit: string; decimals?: number };
	const each = formatBounds(b.limits ?? null, f, defaultPreferences);
	const mean = formatBounds(b.meanLimits ?? null, f, defaultPreferences);
	return [each, mean ? `mean ${mean}` : null].filter(Boolean).join('; ');
}

function drawStep(flow: Flow, step: StepView, m: RecordModel, w: Words): void {
	const s = w.steps;
	flow.heading(`${step.label} ${step.title}${step.critical ? ` (${s.critical})` : ''}`, 3);
	const current = step.current;
	if (!current) {
		flow.text(s.notPerformed, { color: MUTED, indent: 8 });
		return;
	}
	const head = [s.field, s.value, s.limits, s.flag].map((text) => ({ text, bold: true, size: 7.5 }));
	flow.row(head, FIELD_SHARES, { indent: 8, fill: HEAD_FILL });
	const first = step.history[0];
	for (const field of step.fields) {
		if (field.kind === 'recipe') continue;
		const now = valueText(current.values[field.key], field, current, m, w);
		const out = current.outOfLimits.includes(field.key);
		// Annex 11, 8.2: a value that differs from what was first entered is flagged as changed.
		const changed = first !== current && valueText(first.values[field.key], field, first, m, w) !== now;
		const flags = [out ? s.outOfLimits : '', changed ? s.changed : ''].filter(Boolean).join(' · ');
		flow.row(
			[{ text: field.label, size: 8 }, { text: now, size: 8, bold: out }, { text: limitsText(field, m), size: 8 }, { text: flags, size: 7.5, bold: out, color: out ? ALERT : undefined }],
			FIELD_SHARES,
			{ indent: 8 }
		);
		// Every earlier value stays readable, struck through (EU GMP Ch. 4.9; 11.10(e)).
		for (const old of step.history) {
			if (old === current || old.supersededBy === null) continue;
			const was = valueText(old.values[field.key], field, old, m, w);
			const next = step.history.find((e) => e.id === old.supersededBy);
			if (next && valueText(next.values[field.key], field, next, m, w) === was) continue;
			const wasOut = old.outOfLimits.includes(field.key);
			const flag = [s.superseded, wasOut ? s.outOfLimits : ''].filter(Boolean).join(' · ');
			flow.row([{ text: '', size: 8 }, { text: was, size: 8, strike: true, color: MUTED }, { text: '', size: 8 }, { text: flag, size: 7.5, color: wasOut ? ALERT : MUTED }], FIELD_SHARES, { indent: 8 });
		}
	}
	for (const entry of step.history) {
		const sig = entry.signature ? manifest(entry.signature) : entry.performedByName;
		const lines = [`${s.performed}: ${sig}${entry.signatureBound ? '' : ` — ${s.unbound}`}`];
		if (entry.reasonLabel) lines.push(s.correction({ reason: entry.reasonLabel }));
		if (entry.comment) lines.push(`${s.comment}: ${entry.comment}`);
		lines.push(`${s.worked}: ${siteTime(entry.workedAt, m.site.timeZone)} · ${s.recorded}: ${siteTime(entry.recordedAt, m.site.timeZone)}${entry.late ? ` · ${s.late}` : ''}`);
		const superseded = entry.supersededBy !== null;
		flow.text(lines.join('\n'), { size: 8, indent: 8, color: superseded ? MUTED : undefined, bold: !entry.signatureBound });
	}
	if (step.verification) {
		const v = step.verification;
		flow.text(`${s.verified}: ${v.signature ? manifest(v.signature) : v.verifiedByName}${v.signatureBound ? '' : ` — ${s.unbound}`}`, { size: 8, indent: 8, bold: !v.signatureBound });
	}
	for (const d of step.deviations) flow.text(`${w.deviations.title}: ${d.number} · ${d.title} (${d.status})`, { size: 8, indent: 8, color: ALERT });
	for (const a of step.attachments) flow.text(`${s.attachments}: ${a.filename} · ${a.contentType} · ${a.size} B · SHA-256 ${a.sha256}`, { size: 7.5, indent: 8, color: MUTED });
	flow.gap(4);
}

function drawDeviations(flow: Flow, m: RecordModel, w: Words): void {
	const d = w.deviations;
	if (m.view.deviations.length === 0) {
		flow.text(d.none, { color: MUTED });
		return;
	}
	const shares = [16, 12, 42, 12, 18];
	flow.row([d.number, d.step, d.title2, d.status, d.raised].map((text) => ({ text, bold: true, size: 7.5 })), shares, { fill: HEAD_FILL });
	for (const dev of m.view.deviations) {
		flow.row(
			[
				{ text: dev.number, size: 8, bold: true },
				{ text: dev.stepKey ?? '—', size: 8 },
				{ text: `${dev.title}\n${dev.description}`, size: 8 },
				{ text: dev.status, size: 8 },
				{ text: `${siteTime(dev.createdAt, m.site.timeZone)}\n${dev.createdByName}`, size: 7.5 }
			],
			shares
		);
	}
}

function drawSignatures(flow: Flow, m: RecordModel, w: Words): void {
	const s = w.signatures;
	const shares = [24, 14, 40, 22];
	flow.row([s.name, s.meaning, s.when, s.record].map((text) => ({ text, bold: true, size: 7.5 })), shares, { fill: HEAD_FILL });
	for (const sig of m.signatures) {
		const f = manifestationOf(sig);
		flow.row([{ text: f.name, size: 8 }, { text: f.meaning, size: 8 }, { text: `${f.when}\n${f.utc}`, size: 8 }, { text: `${sig.entityType} ${sig.entityId.slice(0, 8)}`, size: 7.5 }], shares);
	}
}
