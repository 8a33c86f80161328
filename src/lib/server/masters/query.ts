import { and, asc, desc, eq, inArray } from 'drizzle-orm';
import type { Executor } from '../db/client';
import { batch, masterRecord, signature, user, type MasterRecord } from '../db/schema';
import type { Template } from '$lib/schemas/template';
import type { MasterStatus } from '$lib/domain/master-lifecycle';
import { isSignatureBound } from '../signatures/query';

/** One row of the master list (GET /api/masters): never the whole template. */
export interface MasterSummary {
	id: string;
	code: string;
	product: string;
	version: number;
	status: MasterStatus;
	templateHash: string;
	createdAt: string;
	effectiveAt: string | null;
}

function summaryOf(r: Pick<MasterRecord, 'id' | 'code' | 'product' | 'version' | 'status' | 'templateHash' | 'createdAt' | 'effectiveAt'>): MasterSummary {
	return {
		id: r.id,
		code: r.code,
		product: r.product,
		version: r.version,
		status: r.status,
		templateHash: r.templateHash,
		createdAt: r.createdAt.toISOString(),
		effectiveAt: r.effectiveAt?.toISOString() ?? null
	};
}

const summaryColumns = {
	id: masterRecord.id,
	code: masterRecord.code,
	product: masterRecord.product,
	version: masterRecord.version,
	status: masterRecord.status,
	templateHash: masterRecord.templateHash,
	createdAt: masterRecord.createdAt,
	effectiveAt: masterRecord.effectiveAt
};

/** Every version, by product code then newest version first. */
export async function listMasters(db: Executor, filter: { status?: MasterStatus; code?: string } = {}): Promise<MasterSummary[]> {
	const where = and(filter.status ? eq(masterRecord.status, filter.status) : undefined, filter.code ? eq(masterRecord.code, filter.code) : undefined);
	const rows = await db.select(summaryColumns).from(masterRecord).where(where).orderBy(asc(masterRecord.code), desc(masterRecord.version));
	return rows.map(summaryOf);
}

export async function findMaster(db: Executor, id: string): Promise<MasterRecord | null> {
	const [row] = await db.select().from(masterRecord).where(eq(masterRecord.id, id));
	return row ?? null;
}

export function templateOf(row: Pick<MasterRecord, 'template'>): Template {
	return row.template as Template;
}

/** Whoever wrote this version: the creator, every editor and the submitter (211.186(a)). */
export function authorsOf(row: Pick<MasterRecord, 'createdBy' | 'authors' | 'submittedBy'>): Set<string> {
	return new Set([row.createdBy, row.submittedBy, ...row.authors].filter((x): x is string => typeof x === 'string'));
}

/** What a lifecycle signature binds: the version and the hash of its exact content (11.70). */
export function masterSignatureContent(row: Pick<MasterRecord, 'id' | 'code' | 'version' | 'templateHash'>, meaning: string) {
	return { kind: 'master-record', meaning, masterRecordId: row.id, code: row.code, version: row.version, templateHash: row.templateHash };
}

export interface MasterDetail extends MasterSummary {
	template: Template;
	basedOnId: string | null;
	revision: number;
	authors: { id: string; name: string }[];
	/** Everyone who counts as an author of this version (authorsOf), for the approval rule. */
	authorIds: string[];
	submittedAt: string | null;
	approvedAt: string | null;
	supersededAt: string | null;
	retiredAt: string | null;
	/**
	 * `bound`: the signed content, rebuilt from the stored row, still hashes to the signature's
	 * content hash (11.70; 11.10(a): an altered record, or one signed on earlier content, shows).
	 */
	signatures: { printedName: string; meaning: string; at: string; timeZone: string; method: string; contentHash: string; bound: boolean }[];
	batches: { id: string; number: string; status: string; issuedAt: string }[];
}

/** A version with what its page shows: people by printed name, its signatures and its batches. */
export async function getMasterDetail(db: Executor, id: string): Promise<MasterDetail | null> {
	const row = await findMaster(db, id);
	if (!row) return null;
	const ids = [...authorsOf(row)];
	const people = ids.length ? await db.select({ id: user.id, name: user.name }).from(user).where(inArray(user.id, ids)) : [];
	const signatures = await db
		.select({ printedName: signature.printedName, meaning: signature.meaning, at: signature.at, timeZone: signature.timeZone, method: signature.method, contentHash: signature.contentHash })
		.from(signature)
		.where(and(eq(signature.entityType, 'master-record'), eq(signature.entityId, id)))
		.orderBy(asc(signature.at));
	const batches = await db
		.select({ id: batch.id, number: batch.number, status: batch.status, issuedAt: batch.issuedAt })
		.from(batch)
		.where(eq(batch.masterRecordId, id))
		.orderBy(desc(batch.issuedAt));
	return {
		...summaryOf(row),
		template: templateOf(row),
		basedOnId: row.basedOnId,
		revision: row.revision,
		authors: people,
		authorIds: ids,
		submittedAt: row.submittedAt?.toISOString() ?? null,
		approvedAt: row.approvedAt?.toISOString() ?? null,
		supersededAt: row.supersededAt?.toISOString() ?? null,
		retiredAt: row.retiredAt?.toISOString() ?? null,
		signatures: signatures.map((s) => ({ ...s, at: String(s.at), bound: isSignatureBound(s, masterSignatureContent(row, s.meaning)) })),
		batches: batches.map((b) => ({ ...b, issuedAt: b.issuedAt.toISOString() }))
	};
}
