import { sql } from 'drizzle-orm';
import { date, index, integer, jsonb, pgTable, text, timestamp, uniqueIndex } from 'drizzle-orm/pg-core';
import { user } from './identity';

export const equipmentStatus = ['in-service', 'out-of-service', 'cleaning-due'] as const;
export type EquipmentStatus = (typeof equipmentStatus)[number];

/** Lyophilizers, balances, filling lines, testers; class-specific properties in `properties`. */
export const equipment = pgTable(
	'equipment',
	{
		id: text('id').primaryKey(),
		code: text('code').notNull(),
		name: text('name').notNull(),
		class: text('class').notNull(),
		location: text('location').notNull(),
		status: text('status', { enum: equipmentStatus }).notNull().default('in-service'),
		calibratedOn: date('calibrated_on', { mode: 'string' }),
		calibrationDueOn: date('calibration_due_on', { mode: 'string' }),
		properties: jsonb('properties').notNull().default(sql`'{}'::jsonb`),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [uniqueIndex('equipment_code_key').on(t.code)]
);

export type Equipment = typeof equipment.$inferSelect;

/**
 * The measuring channels of an item of equipment (a lyophilizer's shelf inlet and outlet probes,
 * product probes, condenser probe, capacitance manometer, Pirani gauge ...), each a calibrated
 * instrument with its own calibration and due date (21 CFR 211.68(a), 211.160(b)(4)).
 */
export const instrument = pgTable(
	'instrument',
	{
		id: text('id').primaryKey(),
		equipmentId: text('equipment_id')
			.notNull()
			.references(() => equipment.id),
		/** tag on the equipment, e.g. "TI-101" */
		tag: text('tag').notNull(),
		name: text('name').notNull(),
		/** cycle-log channel role this instrument feeds (shelf, product, manometer, pirani ...) */
		role: text('role').notNull(),
		/** canonical unit of its readings (degC or Pa) */
		unit: text('unit').notNull(),
		status: text('status', { enum: equipmentStatus }).notNull().default('in-service'),
		calibratedOn: date('calibrated_on', { mode: 'string' }),
		calibrationDueOn: date('calibration_due_on', { mode: 'string' }),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [uniqueIndex('instrument_tag_key').on(t.equipmentId, t.tag)]
);

export type Instrument = typeof instrument.$inferSelect;

/**
 * Every status change and calibration of equipment and instruments, in order: the equipment log
 * (21 CFR 211.182: use, cleaning and maintenance in chronological order). The audit trail holds
 * the same changes; this table is what the equipment page reads.
 */
export const equipmentEvent = pgTable(
	'equipment_event',
	{
		id: text('id').primaryKey(),
		equipmentId: text('equipment_id')
			.notNull()
			.references(() => equipment.id),
		/** null: the event concerns the equipment itself */
		instrumentId: text('instrument_id').references(() => instrument.id),
		kind: text('kind', { enum: ['status', 'calibration', 'created'] }).notNull(),
		fromStatus: text('from_status'),
		toStatus: text('to_status'),
		calibratedOn: date('calibrated_on', { mode: 'string' }),
		calibrationDueOn: date('calibration_due_on', { mode: 'string' }),
		/** certificate number or reference of the calibration */
		reference: text('reference'),
		reason: text('reason').notNull(),
		actorId: text('actor_id').references(() => user.id),
		actorName: text('actor_name').notNull(),
		at: timestamp('at', { withTimezone: true }).notNull().defaultNow(),
		/** ordering within one transaction (same `at`) */
		ordinal: integer('ordinal').notNull().default(0)
	},
	(t) => [index('equipment_event_equipment_idx').on(t.equipmentId, t.at)]
);

export type EquipmentEvent = typeof equipmentEvent.$inferSelect;
