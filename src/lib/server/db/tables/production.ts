import { sql } from 'drizzle-orm';
import { date, integer, jsonb, numeric, pgTable, text, timestamp, uniqueIndex, index } from 'drizzle-orm/pg-core';
import { user } from './identity';

/** Materials (item codes) and their lots; a lot's status and expiry are checked at entry. */
export const material = pgTable(
	'material',
	{
		id: text('id').primaryKey(),
		code: text('code').notNull(),
		name: text('name').notNull(),
		unit: text('unit').notNull(),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [uniqueIndex('material_code_key').on(t.code)]
);

export const lotStatus = ['quarantine', 'released', 'rejected'] as const;

export const materialLot = pgTable(
	'material_lot',
	{
		id: text('id').primaryKey(),
		materialId: text('material_id')
			.notNull()
			.references(() => material.id),
		lotNumber: text('lot_number').notNull(),
		status: text('status', { enum: lotStatus }).notNull(),
		expiresOn: date('expires_on', { mode: 'string' }).notNull(),
		supplier: text('supplier'),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [uniqueIndex('material_lot_number_key').on(t.materialId, t.lotNumber)]
);

export const equipmentStatus = ['in-service', 'out-of-service', 'cleaning-due'] as const;

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

export const masterStatus = ['draft', 'in-review', 'approved', 'effective', 'superseded', 'retired'] as const;
export type MasterStatus = (typeof masterStatus)[number];

/** One version of a master batch record (21 CFR 211.186). An approved version never changes. */
export const masterRecord = pgTable(
	'master_record',
	{
		id: text('id').primaryKey(),
		code: text('code').notNull(),
		version: integer('version').notNull(),
		product: text('product').notNull(),
		status: text('status', { enum: masterStatus }).notNull().default('draft'),
		template: jsonb('template').notNull(),
		/** SHA-256 of the RFC 8785 canonical template. */
		templateHash: text('template_hash').notNull(),
		createdBy: text('created_by').references(() => user.id),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
		effectiveAt: timestamp('effective_at', { withTimezone: true })
	},
	(t) => [uniqueIndex('master_record_version_key').on(t.code, t.version)]
);

export const batchStatus = ['issued', 'in-progress', 'awaiting-review', 'released', 'rejected'] as const;
export type BatchStatus = (typeof batchStatus)[number];

/** An executed batch record: a frozen snapshot of its master with the snapshot's SHA-256 (211.188). */
export const batch = pgTable(
	'batch',
	{
		id: text('id').primaryKey(),
		number: text('number').notNull(),
		masterRecordId: text('master_record_id')
			.notNull()
			.references(() => masterRecord.id),
		status: text('status', { enum: batchStatus }).notNull().default('issued'),
		batchSize: numeric('batch_size', { mode: 'number' }).notNull(),
		batchSizeUnit: text('batch_size_unit').notNull(),
		snapshot: jsonb('snapshot').notNull(),
		snapshotHash: text('snapshot_hash').notNull(),
		issuedBy: text('issued_by').references(() => user.id),
		issuedAt: timestamp('issued_at', { withTimezone: true }).notNull().defaultNow(),
		/** Optimistic concurrency: bumped by every change to the batch or its entries. */
		version: integer('version').notNull().default(1)
	},
	(t) => [uniqueIndex('batch_number_key').on(t.number), index('batch_status_idx').on(t.status)]
);

export type Material = typeof material.$inferSelect;
export type MaterialLot = typeof materialLot.$inferSelect;
export type Equipment = typeof equipment.$inferSelect;
export type MasterRecord = typeof masterRecord.$inferSelect;
export type Batch = typeof batch.$inferSelect;
