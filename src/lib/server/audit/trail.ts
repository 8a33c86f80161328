import { z } from 'zod';
import { and, desc, eq, gte, ilike, lt, lte, or, sql, type SQL } from 'drizzle-orm';
import type { Executor } from '../db/client';
import { auditEvent } from '../db/schema';
import type { HashedEvent } from './ledger';

/**
 * The inspector's reading of the trail (21 CFR 11.10(e) "available for agency review and
 * copying"; Annex 11, 9 "readable"): filters and cursor paging, newest first.
 */
export const trailFilterSchema = z.object({
	batch: z.string().trim().min(1).max(200).optional(),
	actor: z.string().trim().min(1).max(200).optional(),
	action: z.string().trim().min(1).max(200).optional(),
	entity: z.string().trim().min(1).max(300).optional(),
	/** Calendar dates (site time zone) or ISO instants. */
	from: z.string().trim().min(1).max(40).optional(),
	to: z.string().trim().min(1).max(40).optional(),
	q: z.string().trim().min(1).max(200).optional()
});
export type TrailFilter = z.infer<typeof trailFilterSchema>;

export const trailPageSchema = trailFilterSchema.extend({
	limit: z.coerce.number().int().min(1).max(500).default(50),
	cursor: z
		.string()
		.regex(/^[1-9][0-9]{0,15}$/, 'must be a seq from nextCursor')
		.optional()
});

/** A stored event as the trail shows it: the hashed fields and the chain links. */
export interface TrailEvent extends HashedEvent {
	prevHash: string;
	hash: string;
}

/** Parses URL search params into a filter; returns zod issues on bad input. */
export function parseTrailQuery(params: URLSearchParams) {
	const raw = Object.fromEntries([...params.entries()].filter(([, v]) => v.trim() !== ''));
	return trailPageSchema.safeParse(raw);
}

/** Start of a calendar day in a time zone, as a UTC instant (handles DST through Intl offsets). */
export function startOfDayInZone(date: string, timeZone: string): Date {
	const [y, m, d] = date.split('-').map(Number);
	const guess = Date.UTC(y, m - 1, d);
	const offset = (at: number) => {
		const parts = new Intl.DateTimeFormat('en-US', { timeZone, hourCycle: 'h23', year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit', second: '2-digit' }).formatToParts(new Date(at));
		const get = (t: string) => Number(parts.find((p) => p.type === t)?.value);
		return Date.UTC(get('year'), get('month') - 1, get('day'), get('hour'), get('minute'), get('second')) - at;
	};
	const first = guess - offset(guess);
	return new Date(guess - offset(first));
}

function instant(value: string, timeZone: string, endOfDay: boolean): Date | null {
	if (/^\d{4}-\d{2}-\d{2}$/.test(value)) {
		const start = startOfDayInZone(value, timeZone);
		return endOfDay ? new Date(startOfDayInZone(nextDay(value), timeZone).getTime()) : start;
	}
	const d = new Date(value);
	return Number.isNaN(d.getTime()) ? null : d;
}

function nextDay(date: string): string {
	const d = new Date(`${date}T00:00:00Z`);
	d.setUTCDate(d.getUTCDate() + 1);
	return d.toISOString().slice(0, 10);
}

/** SQL conditions of a filter (shared by the page, the API and the export). */
export function trailConditions(filter: TrailFilter, timeZone: string): SQL[] {
	const where: SQL[] = [];
	if (filter.batch) where.push(eq(auditEvent.batchId, filter.batch));
	if (filter.actor) where.push(or(eq(auditEvent.actorId, filter.actor), ilike(auditEvent.actorName, `%${escapeLike(filter.actor)}%`))!);
	if (filter.action) where.push(filter.action.endsWith('.') ? ilike(auditEvent.action, `${escapeLike(filter.action)}%`) : eq(auditEvent.action, filter.action));
	if (filter.entity) {
		const [type, id] = filter.entity.split(':', 2);
		where.push(id ? and(eq(auditEvent.entityType, type), eq(auditEvent.entityId, id))! : or(eq(auditEvent.entityType, type), eq(auditEvent.entityId, type))!);
	}
	const from = filter.from ? instant(filter.from, timeZone, false) : null;
	const to = filter.to ? instant(filter.to, timeZone, true) : null;
	if (from) where.push(gte(auditEvent.at, from.toISOString()));
	// A date means the whole day: up to the start of the next one.
	if (to) where.push(filter.to && /^\d{4}-\d{2}-\d{2}$/.test(filter.to) ? lt(auditEvent.at, to.toISOString()) : lte(auditEvent.at, to.toISOString()));
	// Free text over the whole hashed payload: names, ids, reasons, before and after values.
	if (filter.q) where.push(ilike(auditEvent.canonical, `%${escapeLike(filter.q)}%`));
	return where;
}

function escapeLike(text: string): string {
	return text.replace(/[\\%_]/g, (c) => `\\${c}`);
}

const columns = {
	seq: auditEvent.seq,
	at: sql<string>`to_char(${auditEvent.at} at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"')`,
	actorId: auditEvent.actorId,
	actorName: auditEvent.actorName,
	action: auditEvent.action,
	entityType: auditEvent.entityType,
	entityId: auditEvent.entityId,
	batchId: auditEvent.batchId,
	before: auditEvent.before,
	after: auditEvent.after,
	reason: auditEvent.reason,
	prevHash: auditEvent.prevHash,
	hash: auditEvent.hash
};

/** One page, newest first; nextCursor is the seq to continue below (null at the end). */
export async function listTrail(db: Executor, filter: TrailFilter, page: { limit: number; cursor?: string }, timeZone: string): Promise<{ events: TrailEvent[]; nextCursor: string | null }> {
	const where = trailConditions(filter, timeZone);
	if (page.cursor) where.push(lt(auditEvent.seq, Number(page.cursor)));
	const rows = await db
		.select(columns)
		.from(auditEvent)
		.where(and(...where))
		.orderBy(desc(auditEvent.seq))
		.limit(page.limit + 1);
	const events = rows.slice(0, page.limit).map((r) => ({ ...r, seq: Number(r.seq) }));
	return { events, nextCursor: rows.length > page.limit ? String(events[events.length - 1].seq) : null };
}

/** Export order: oldest first from `afterSeq`, up to `maxSeq` (the checkpoint the export carries). */
export async function readTrailBatch(db: Executor, filter: TrailFilter, timeZone: string, afterSeq: number, maxSeq: number, limit: number) {
	const where = [...trailConditions(filter, timeZone), sql`${auditEvent.seq} > ${afterSeq}`, sql`${auditEvent.seq} <= ${maxSeq}`];
	return db
		.select({ ...columns, canonical: auditEvent.canonical })
		.from(auditEvent)
		.where(and(...where))
		.orderBy(auditEvent.seq)
		.limit(limit);
}

export function isFiltered(filter: TrailFilter): boolean {
	return Object.values(filter).some((v) => v !== undefined);
}
