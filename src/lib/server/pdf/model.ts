import type { Bounds } from '$lib/domain/limits';
import type { SignatureFacts } from '$lib/domain/signature';
import type { SignedCheckpoint } from '../audit/checkpoint';
import type { BatchView } from '../batches/query';
import type { ChartModel } from './chart';

/**
 * What the printed records are made from, as plain data: loaded from the database by
 * record-data.ts, or built synthetically by the benchmark. The renderers (record.ts,
 * audit-trail.ts) do no I/O.
 */
export interface AuditRow {
	seq: number;
	/** UTC, ISO 8601 */
	at: string;
	actorName: string;
	action: string;
	entityType: string;
	entityId: string | null;
	reason: string | null;
	before: unknown;
	after: unknown;
	hash: string;
}

export interface AuditSection {
	events: AuditRow[];
	/** events matching, which may be more than are printed */
	total: number;
	checkpoint: SignedCheckpoint | null;
	filter: Record<string, string> | null;
}

export interface SignatureRow extends SignatureFacts {
	entityType: string;
	entityId: string;
}

export interface RecordModel {
	site: { name: string; timeZone: string };
	generatedAt: string;
	generatedBy: string;
	view: BatchView;
	master: { code: string; version: number } | null;
	/** Resolved limits of each field at this batch's size (ScaledTemplate.bounds). */
	bounds: Record<string, { limits?: Bounds; meanLimits?: Bounds }>;
	/** Every signature of the batch (21 CFR 11.50), oldest first. */
	signatures: SignatureRow[];
	/** The batch's disposition signatures (meaning released or rejected), oldest first. */
	dispositions: SignatureRow[];
	/** The comment QA gave with the disposition (21 CFR 211.192), if any. */
	dispositionComment: string | null;
	charts: ChartModel[];
	audit: AuditSection;
	/** The electronic original (RFC 8785 JSON), attached to the PDF. */
	canonical: string;
}

export interface AuditReportModel {
	site: { name: string; timeZone: string };
	generatedAt: string;
	generatedBy: string;
	audit: AuditSection;
	canonical: string;
}

/** A compact, readable "what changed" of an event: key: before → after, with its reason. */
export function describeChange(before: unknown, after: unknown, max = 400): string {
	const b = isRecord(before) ? before : before === null || before === undefined ? {} : { value: before };
	const a = isRecord(after) ? after : after === null || after === undefined ? {} : { value: after };
	const parts: string[] = [];
	for (const key of [...new Set([...Object.keys(b), ...Object.keys(a)])]) {
		const was = key in b ? short(b[key]) : null;
		const now = key in a ? short(a[key]) : null;
		if (was !== null && now !== null && was !== now) parts.push(`${key}: ${was} → ${now}`);
		else if (was === null && now !== null) parts.push(`${key}: ${now}`);
		else if (was !== null && now === null) parts.push(`${key}: ${was} → (removed)`);
	}
	const text = parts.join('; ');
	return text.length > max ? `${text.slice(0, max - 1)}…` : text;
}

function short(v: unknown): string {
	const s = typeof v === 'string' ? v : JSON.stringify(v);
	return s.length > 160 ? `${s.slice(0, 159)}…` : s;
}

function isRecord(v: unknown): v is Record<string, unknown> {
	return typeof v === 'object' && v !== null && !Array.isArray(v);
}
