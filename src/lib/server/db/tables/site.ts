import { pgTable, text, timestamp, jsonb } from 'drizzle-orm/pg-core';

/** Site-wide settings (key → JSON value). Every change goes through the write path and is audited. */
export const setting = pgTable('setting', {
	key: text('key').primaryKey(),
	value: jsonb('value').notNull(),
	updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow()
});

export type Setting = typeof setting.$inferSelect;
