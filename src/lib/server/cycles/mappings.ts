import { randomUUID } from 'node:crypto';
import { and, asc, eq } from 'drizzle-orm';
import { z } from 'zod';
import { cycleLogMappingSchema, type CycleLogMapping } from '$lib/domain/lyo/mapping';
import type { Actor } from '../audit/ledger';
import type { Database, Executor } from '../db/client';
import { cycleMapping, equipment } from '../db/schema';
import { runUnitOfWork, type UnitOfWork } from '../work';

export const saveMappingSchema = z.object({
	name: z.string().trim().min(1).max(80),
	mapping: cycleLogMappingSchema
});

export interface SavedMapping {
	id: string;
	name: string;
	mapping: CycleLogMapping;
	updatedAt: string;
}

/** The mappings saved for a lyophilizer, to reuse for its next logs. */
export async function listMappings(db: Executor, equipmentId: string): Promise<SavedMapping[]> {
	const rows = await db.select().from(cycleMapping).where(eq(cycleMapping.equipmentId, equipmentId)).orderBy(asc(cycleMapping.name));
	return rows.map((r) => ({ id: r.id, name: r.name, mapping: r.mapping as CycleLogMapping, updatedAt: r.updatedAt.toISOString() }));
}

/** Saves (or replaces, by name) a mapping for a lyophilizer; audited with before and after. */
export async function saveMapping(uow: UnitOfWork, equipmentId: string, input: z.input<typeof saveMappingSchema>): Promise<SavedMapping> {
	const { name, mapping } = saveMappingSchema.parse(input);
	const [dryer] = await uow.tx.select({ code: equipment.code }).from(equipment).where(eq(equipment.id, equipmentId));
	if (!dryer) throw new Error('No such equipment.');
	const [existing] = await uow.tx.select().from(cycleMapping).where(and(eq(cycleMapping.equipmentId, equipmentId), eq(cycleMapping.name, name)));
	const now = new Date();
	let id: string;
	if (existing) {
		id = existing.id;
		await uow.tx.update(cycleMapping).set({ mapping, updatedBy: uow.actor.id, updatedAt: now }).where(eq(cycleMapping.id, id));
	} else {
		id = randomUUID();
		await uow.tx.insert(cycleMapping).values({ id, equipmentId, name, mapping, updatedBy: uow.actor.id, updatedAt: now });
	}
	await uow.audit({
		action: existing ? 'cycle-mapping.update' : 'cycle-mapping.create',
		entityType: 'cycle-mapping',
		entityId: id,
		before: existing ? { name, mapping: existing.mapping } : null,
		after: { equipment: dryer.code, name, mapping }
	});
	return { id, name, mapping, updatedAt: now.toISOString() };
}

/**
 * The mapping service for routes (REVIEW finding 9): null when there is no such lyophilizer,
 * else the mapping saved in its own audited unit of work.
 */
export async function saveLyophilizerMapping(db: Database, actor: Actor, equipmentId: string, input: z.input<typeof saveMappingSchema>): Promise<SavedMapping | null> {
	const [dryer] = await db.select({ id: equipment.id, class: equipment.class }).from(equipment).where(eq(equipment.id, equipmentId));
	if (!dryer || dryer.class !== 'lyophilizer') return null;
	return runUnitOfWork(db, actor, (uow) => saveMapping(uow, dryer.id, input));
}
