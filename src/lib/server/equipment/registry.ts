import { randomUUID } from 'node:crypto';
import { and, asc, desc, eq } from 'drizzle-orm';
import { z } from 'zod';
import { CHANNEL_ROLES, ROLE_UNITS } from '$lib/domain/lyo/series';
import type { Actor } from '../audit/ledger';
import type { Database, Executor } from '../db/client';
import { equipment, equipmentEvent, equipmentStatus, instrument, type Equipment, type EquipmentEvent, type Instrument } from '../db/schema';
import { runUnitOfWork, type UnitOfWork } from '../work';

/**
 * Expected refusals of the registry (unknown item, duplicate code ...), each with a stable code and
 * what its words need: the page shows the catalogue's equipment.errors[code] in the person's
 * language (./http.ts); the English message is for logs and the API.
 */
export interface EquipmentErrorParams {
	'equipment-exists': { equipment: string };
	'not-found': Record<string, never>;
	'instrument-not-found': Record<string, never>;
	'same-status': { status: string };
	'instrument-exists': { equipment: string; tag: string };
}
export type EquipmentErrorCode = keyof EquipmentErrorParams;
export type EquipmentErrorStatus = 400 | 404 | 409;

/** style.md: 404 missing, 409 the registry's present state forbids it. */
const equipmentStatusOf: Record<EquipmentErrorCode, EquipmentErrorStatus> = {
	'equipment-exists': 409,
	'not-found': 404,
	'instrument-not-found': 404,
	'same-status': 409,
	'instrument-exists': 409
};

export class EquipmentError<C extends EquipmentErrorCode = EquipmentErrorCode> extends Error {
	readonly status: EquipmentErrorStatus;
	constructor(
		readonly code: C,
		message: string,
		readonly params: EquipmentErrorParams[C]
	) {
		super(message);
		this.name = 'EquipmentError';
		this.status = equipmentStatusOf[code];
	}
}

/** A registry refusal as the union of its codes, so a switch on `code` narrows `params`. */
export type AnyEquipmentError = { [C in EquipmentErrorCode]: EquipmentError<C> }[EquipmentErrorCode];

export function isEquipmentError(err: unknown): err is AnyEquipmentError {
	return err instanceof EquipmentError;
}

const isoDate = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'a date as YYYY-MM-DD');
const code = z.string().trim().min(2).max(40).regex(/^[A-Za-z0-9][A-Za-z0-9._-]*$/, 'letters, digits, dot, dash, underscore');
// Annex 11, 9 and 12.3: every change to the registry says why.
const reason = z.string().trim().min(3).max(500);

/** Lyophilizer properties the cycle analysis uses (chamber volume and leak limit for the leak test). */
export const lyophilizerPropertiesSchema = z.object({
	shelfAreaM2: z.number().positive().max(200),
	chamberVolumeL: z.number().positive().max(100_000),
	condenserCapacityKg: z.number().positive().max(10_000),
	leakRateLimitMbarLPerS: z.number().positive().max(10)
});
export type LyophilizerProperties = z.infer<typeof lyophilizerPropertiesSchema>;

export const createEquipmentSchema = z
	.object({
		code,
		name: z.string().trim().min(2).max(200),
		class: z.string().trim().min(2).max(60).regex(/^[a-z0-9-]+$/, 'lower-case letters, digits and dashes'),
		location: z.string().trim().min(2).max(200),
		calibratedOn: isoDate.nullable(),
		calibrationDueOn: isoDate.nullable(),
		properties: z.record(z.string(), z.unknown()).default({}),
		reason
	})
	.superRefine((e, ctx) => {
		if (e.calibratedOn && e.calibrationDueOn && e.calibrationDueOn < e.calibratedOn) {
			ctx.addIssue({ code: 'custom', path: ['calibrationDueOn'], message: 'the due date is before the calibration date' });
		}
		if (e.class === 'lyophilizer') {
			const parsed = lyophilizerPropertiesSchema.safeParse(e.properties);
			if (!parsed.success) ctx.addIssue({ code: 'custom', path: ['properties'], message: 'a lyophilizer needs shelf area, chamber volume, condenser capacity and leak-rate limit' });
		}
	});

export const statusChangeSchema = z.object({ status: z.enum(equipmentStatus), reason });

export const calibrationSchema = z
	.object({ calibratedOn: isoDate, calibrationDueOn: isoDate, reference: z.string().trim().min(1).max(120), reason })
	.refine((c) => c.calibrationDueOn >= c.calibratedOn, { path: ['calibrationDueOn'], message: 'the due date is before the calibration date' });

export const instrumentSchema = z
	.object({
		tag: code,
		name: z.string().trim().min(2).max(200),
		role: z.enum(CHANNEL_ROLES),
		calibratedOn: isoDate.nullable(),
		calibrationDueOn: isoDate.nullable(),
		reason
	})
	.refine((i) => !(i.calibratedOn && i.calibrationDueOn && i.calibrationDueOn < i.calibratedOn), {
		path: ['calibrationDueOn'],
		message: 'the due date is before the calibration date'
	});

export async function listEquipment(db: Executor): Promise<Equipment[]> {
	return db.select().from(equipment).orderBy(asc(equipment.code));
}

export async function getEquipment(db: Executor, id: string): Promise<Equipment | null> {
	const [row] = await db.select().from(equipment).where(eq(equipment.id, id));
	return row ?? null;
}

export async function listInstruments(db: Executor, equipmentId: string): Promise<Instrument[]> {
	return db.select().from(instrument).where(eq(instrument.equipmentId, equipmentId)).orderBy(asc(instrument.tag));
}

/** Status changes and calibrations, newest first. */
export async function listEquipmentEvents(db: Executor, equipmentId: string): Promise<EquipmentEvent[]> {
	return db
		.select()
		.from(equipmentEvent)
		.where(eq(equipmentEvent.equipmentId, equipmentId))
		.orderBy(desc(equipmentEvent.at), desc(equipmentEvent.ordinal));
}

async function logEvent(uow: UnitOfWork, row: Omit<typeof equipmentEvent.$inferInsert, 'id' | 'actorId' | 'actorName'>): Promise<void> {
	await uow.tx.insert(equipmentEvent).values({ id: randomUUID(), actorId: uow.actor.id, actorName: uow.actor.name, ...row });
}

export async function createEquipment(uow: UnitOfWork, input: z.input<typeof createEquipmentSchema>): Promise<Equipment> {
	const e = createEquipmentSchema.parse(input);
	const [clash] = await uow.tx.select({ id: equipment.id }).from(equipment).where(eq(equipment.code, e.code));
	if (clash) throw new EquipmentError('equipment-exists', `Equipment ${e.code} already exists.`, { equipment: e.code });
	const row = { id: randomUUID(), code: e.code, name: e.name, class: e.class, location: e.location, status: 'in-service' as const, calibratedOn: e.calibratedOn, calibrationDueOn: e.calibrationDueOn, properties: e.properties };
	const [created] = await uow.tx.insert(equipment).values(row).returning();
	await logEvent(uow, { equipmentId: row.id, kind: 'created', toStatus: 'in-service', calibratedOn: e.calibratedOn, calibrationDueOn: e.calibrationDueOn, reason: e.reason });
	await uow.audit({ action: 'equipment.create', entityType: 'equipment', entityId: row.id, after: row, reason: e.reason });
	return created;
}

async function requireEquipment(uow: UnitOfWork, id: string): Promise<Equipment> {
	const row = await getEquipment(uow.tx, id);
	if (!row) throw new EquipmentError('not-found', 'No such equipment.', {});
	return row;
}

async function requireInstrument(uow: UnitOfWork, equipmentId: string, id: string): Promise<Instrument> {
	const [row] = await uow.tx.select().from(instrument).where(and(eq(instrument.id, id), eq(instrument.equipmentId, equipmentId)));
	if (!row) throw new EquipmentError('instrument-not-found', 'No such instrument on this equipment.', {});
	return row;
}

/** Sets the status of the equipment, or of one of its instruments, and logs the change. */
export async function changeStatus(uow: UnitOfWork, equipmentId: string, instrumentId: string | null, input: z.input<typeof statusChangeSchema>): Promise<void> {
	const s = statusChangeSchema.parse(input);
	const item = await requireEquipment(uow, equipmentId);
	const before = instrumentId ? await requireInstrument(uow, equipmentId, instrumentId) : item;
	if (before.status === s.status) throw new EquipmentError('same-status', `The status is already "${s.status}".`, { status: s.status });
	if (instrumentId) await uow.tx.update(instrument).set({ status: s.status }).where(eq(instrument.id, instrumentId));
	else await uow.tx.update(equipment).set({ status: s.status }).where(eq(equipment.id, equipmentId));
	await logEvent(uow, { equipmentId, instrumentId, kind: 'status', fromStatus: before.status, toStatus: s.status, reason: s.reason });
	await uow.audit({
		action: instrumentId ? 'instrument.status' : 'equipment.status',
		entityType: instrumentId ? 'instrument' : 'equipment',
		entityId: instrumentId ?? equipmentId,
		before: { status: before.status },
		after: { status: s.status, equipment: item.code },
		reason: s.reason
	});
}

/** Records a calibration (new calibration and due dates) of the equipment or an instrument. */
export async function recordCalibration(uow: UnitOfWork, equipmentId: string, instrumentId: string | null, input: z.input<typeof calibrationSchema>): Promise<void> {
	const c = calibrationSchema.parse(input);
	const item = await requireEquipment(uow, equipmentId);
	const before = instrumentId ? await requireInstrument(uow, equipmentId, instrumentId) : item;
	const dates = { calibratedOn: c.calibratedOn, calibrationDueOn: c.calibrationDueOn };
	if (instrumentId) await uow.tx.update(instrument).set(dates).where(eq(instrument.id, instrumentId));
	else await uow.tx.update(equipment).set(dates).where(eq(equipment.id, equipmentId));
	await logEvent(uow, { equipmentId, instrumentId, kind: 'calibration', ...dates, reference: c.reference, reason: c.reason });
	await uow.audit({
		action: instrumentId ? 'instrument.calibrate' : 'equipment.calibrate',
		entityType: instrumentId ? 'instrument' : 'equipment',
		entityId: instrumentId ?? equipmentId,
		before: { calibratedOn: before.calibratedOn, calibrationDueOn: before.calibrationDueOn },
		after: { ...dates, reference: c.reference, equipment: item.code },
		reason: c.reason
	});
}

/** Adds a measuring channel (instrument) to an item of equipment. */
export async function addInstrument(uow: UnitOfWork, equipmentId: string, input: z.input<typeof instrumentSchema>): Promise<Instrument> {
	const i = instrumentSchema.parse(input);
	const item = await requireEquipment(uow, equipmentId);
	const [clash] = await uow.tx.select({ id: instrument.id }).from(instrument).where(and(eq(instrument.equipmentId, equipmentId), eq(instrument.tag, i.tag)));
	if (clash) throw new EquipmentError('instrument-exists', `${item.code} already has an instrument ${i.tag}.`, { equipment: item.code, tag: i.tag });
	const row = {
		id: randomUUID(),
		equipmentId,
		tag: i.tag,
		name: i.name,
		role: i.role,
		unit: i.role === 'other' ? 'degC' : ROLE_UNITS[i.role],
		status: 'in-service' as const,
		calibratedOn: i.calibratedOn,
		calibrationDueOn: i.calibrationDueOn
	};
	const [created] = await uow.tx.insert(instrument).values(row).returning();
	await logEvent(uow, { equipmentId, instrumentId: row.id, kind: 'created', toStatus: 'in-service', calibratedOn: i.calibratedOn, calibrationDueOn: i.calibrationDueOn, reason: i.reason });
	await uow.audit({ action: 'instrument.create', entityType: 'instrument', entityId: row.id, after: { ...row, equipment: item.code }, reason: i.reason });
	return created;
}

/** One change of the registry as a route asks for it (the equipment page's form actions). */
export type EquipmentChange =
	| { kind: 'status'; instrumentId: string | null; input: z.input<typeof statusChangeSchema> }
	| { kind: 'calibration'; instrumentId: string | null; input: z.input<typeof calibrationSchema> }
	| { kind: 'instrument'; input: z.input<typeof instrumentSchema> };

/**
 * The registry service for routes (REVIEW finding 9): each change in its own audited unit of
 * work, so a route only parses, guards and calls. Refusals: EquipmentError, or ZodError for input
 * the schemas refuse.
 */
export async function applyEquipmentChange(db: Database, actor: Actor, equipmentId: string, change: EquipmentChange): Promise<void> {
	await runUnitOfWork(db, actor, async (uow) => {
		if (change.kind === 'status') await changeStatus(uow, equipmentId, change.instrumentId, change.input);
		else if (change.kind === 'calibration') await recordCalibration(uow, equipmentId, change.instrumentId, change.input);
		else await addInstrument(uow, equipmentId, change.input);
	});
}
