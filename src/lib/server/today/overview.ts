import { and, count, desc, eq, inArray, lt, max, ne, or, isNotNull } from 'drizzle-orm';
import type { Executor } from '../db/client';
import { auditEvent, batch, equipment, masterRecord, user } from '../db/schema';
import { hasPermission, type Role } from '$lib/domain/permissions';

export interface BatchLine {
	id: string;
	number: string;
	product: string;
	status: string;
}

export interface TodayOverview {
	batchesInProgress?: BatchLine[];
	batchesIssued?: BatchLine[];
	batchesAwaitingReview?: BatchLine[];
	effectiveMasters?: { id: string; code: string; product: string; version: number }[];
	draftMasters?: { id: string; code: string; product: string; version: number; status: string }[];
	equipmentAttention?: { id: string; code: string; name: string; status: 'in-service' | 'out-of-service' | 'cleaning-due'; calibrationDueOn: string | null }[];
	auditCount?: number;
	accountCount?: number;
}

/** "What needs me now": one panel per thing the user's roles act on (design.md, areas: Today). */
export async function getTodayOverview(db: Executor, roles: Role[], today: string): Promise<TodayOverview> {
	const out: TodayOverview = {};
	const batchesIn = async (status: 'issued' | 'in-progress' | 'awaiting-review') =>
		db
			.select({ id: batch.id, number: batch.number, product: masterRecord.product, status: batch.status })
			.from(batch)
			.innerJoin(masterRecord, eq(masterRecord.id, batch.masterRecordId))
			.where(eq(batch.status, status))
			.orderBy(desc(batch.issuedAt))
			.limit(20);
	if (hasPermission(roles, 'batch.execute') || hasPermission(roles, 'batch.verify')) {
		out.batchesInProgress = await batchesIn('in-progress');
		out.batchesIssued = await batchesIn('issued');
	}
	if (hasPermission(roles, 'review.perform')) out.batchesAwaitingReview = await batchesIn('awaiting-review');
	if (hasPermission(roles, 'master.read')) {
		const select = { id: masterRecord.id, code: masterRecord.code, product: masterRecord.product, version: masterRecord.version, status: masterRecord.status };
		out.effectiveMasters = await db.select(select).from(masterRecord).where(eq(masterRecord.status, 'effective')).limit(20);
		if (hasPermission(roles, 'master.author') || hasPermission(roles, 'master.approve')) {
			out.draftMasters = await db
				.select(select)
				.from(masterRecord)
				.where(inArray(masterRecord.status, ['draft', 'in-review', 'approved']))
				.limit(20);
		}
	}
	if (hasPermission(roles, 'equipment.manage') || hasPermission(roles, 'batch.execute')) {
		out.equipmentAttention = await db
			.select({ id: equipment.id, code: equipment.code, name: equipment.name, status: equipment.status, calibrationDueOn: equipment.calibrationDueOn })
			.from(equipment)
			.where(or(ne(equipment.status, 'in-service'), and(isNotNull(equipment.calibrationDueOn), lt(equipment.calibrationDueOn, today))))
			.orderBy(equipment.code);
	}
	if (hasPermission(roles, 'audit.read')) {
		// seq is gap-free from 1, so its maximum is the count, read from the primary key's index
		// instead of counting millions of rows on every page view.
		const [row] = await db.select({ n: max(auditEvent.seq) }).from(auditEvent);
		out.auditCount = Number(row.n ?? 0);
	}
	if (hasPermission(roles, 'user.manage')) {
		const [row] = await db.select({ n: count() }).from(user);
		out.accountCount = row.n;
	}
	return out;
}
