import { date, pgTable, text, timestamp, uniqueIndex } from 'drizzle-orm/pg-core';

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

export type Material = typeof material.$inferSelect;
export type MaterialLot = typeof materialLot.$inferSelect;
