import { boolean, customType, doublePrecision, index, integer, jsonb, pgTable, primaryKey, text, timestamp, uniqueIndex } from 'drizzle-orm/pg-core';
import { batch } from './batches';
import { equipment } from './equipment';
import { user } from './identity';

/**
 * bytea. Written by series-store.ts with COPY … FORMAT binary on PGlite (raw bytes, no text
 * round trip) and as base64 text on a PostgreSQL server; read as hex text. PGlite's own
 * Uint8Array parameter and result encoding takes ~0.7 s per 2 MB series, far slower than either.
 * The series columns use STORAGE EXTERNAL (migration 0013): float64 samples barely compress,
 * pglz spent most of an import trying, and uncompressed values let substring() fetch only the
 * TOAST chunks of a zoom window.
 */
const bytea = customType<{ data: Uint8Array; driverData: Uint8Array }>({
	dataType() {
		return 'bytea';
	}
});

/** A column mapping saved for a lyophilizer and reused for its next logs (schema: domain/lyo/mapping.ts). */
export const cycleMapping = pgTable(
	'cycle_mapping',
	{
		id: text('id').primaryKey(),
		equipmentId: text('equipment_id')
			.notNull()
			.references(() => equipment.id),
		name: text('name').notNull(),
		mapping: jsonb('mapping').notNull(),
		updatedBy: text('updated_by').references(() => user.id),
		updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [uniqueIndex('cycle_mapping_name_key').on(t.equipmentId, t.name)]
);

export type CycleMapping = typeof cycleMapping.$inferSelect;

/**
 * One imported cycle log: the file's identity (SHA-256, size), the mapping and recipe it was read
 * with, and the analysis, so the result can be reproduced from the stored inputs.
 */
export const cycleRun = pgTable(
	'cycle_run',
	{
		id: text('id').primaryKey(),
		equipmentId: text('equipment_id')
			.notNull()
			.references(() => equipment.id),
		batchId: text('batch_id').references(() => batch.id),
		/** the batch step (key) the run belongs to */
		stepKey: text('step_key'),
		fileName: text('file_name').notNull(),
		fileSha256: text('file_sha256').notNull(),
		fileBytes: integer('file_bytes').notNull(),
		/** hashSeries of the stored series, fixed at import (null: a run imported before 0014, backfilled there) */
		seriesSha256: text('series_sha256'),
		mapping: jsonb('mapping').notNull(),
		/** the recipe the run was checked against (null: analysed without one) */
		recipe: jsonb('recipe'),
		analysis: jsonb('analysis').notNull(),
		samples: integer('samples').notNull(),
		durationS: doublePrecision('duration_s').notNull(),
		/** logger clock at the first row, as written in the log (no time zone implied) */
		loggerStart: text('logger_start'),
		uploadedBy: text('uploaded_by').references(() => user.id),
		uploadedByName: text('uploaded_by_name').notNull(),
		uploadedAt: timestamp('uploaded_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [index('cycle_run_equipment_idx').on(t.equipmentId, t.uploadedAt), index('cycle_run_batch_idx').on(t.batchId)]
);

export type CycleRun = typeof cycleRun.$inferSelect;

/**
 * The series of a run, one row per channel: ordinal 0 is the time axis (s from the log start),
 * 1… the mapped channels in mapping order. `data` is the channel's Float64Array as little-endian
 * IEEE-754 bytes (8 per sample, NaN = no reading): 260 000 samples make one 2 MB value, which
 * stores and loads in one round trip instead of millions of rows.
 */
export const cycleSeries = pgTable(
	'cycle_series',
	{
		runId: text('run_id')
			.notNull()
			.references(() => cycleRun.id),
		ordinal: integer('ordinal').notNull(),
		/** the log column */
		column: text('column').notNull(),
		/** 'time' for ordinal 0, else the channel role */
		role: text('role').notNull(),
		/** canonical unit (degC, Pa, s) */
		unit: text('unit').notNull(),
		data: bytea('data').notNull()
	},
	(t) => [primaryKey({ columns: [t.runId, t.ordinal] })]
);

/**
 * A coarse min/max overview of a run, computed at import (domain/lyo/series.ts downsampleSeries
 * with OVERVIEW_BUCKETS buckets over the whole log), so the first chart of a run reads ~200 KB
 * instead of every sample. `data` holds Float64 columns of `rows` values each, little-endian:
 * the row times, the sample index of each row, then one column per channel in `channels` order.
 */
export const cycleOverview = pgTable('cycle_overview', {
	runId: text('run_id')
		.primaryKey()
		.references(() => cycleRun.id),
	buckets: integer('buckets').notNull(),
	rows: integer('rows').notNull(),
	/** samples of the whole run */
	samples: integer('samples').notNull(),
	/** [{ id, role, unit }] in series ordinal order (ordinal 1 first) */
	channels: jsonb('channels').notNull(),
	data: bytea('data').notNull()
});

/** A pressure-rise (leak) test evaluated on a run or from entered values. */
export const leakTest = pgTable(
	'leak_test',
	{
		id: text('id').primaryKey(),
		equipmentId: text('equipment_id')
			.notNull()
			.references(() => equipment.id),
		runId: text('run_id').references(() => cycleRun.id),
		/** 'fit' (least squares on the run's manometer in [fromS, toS]) or 'entered' (ΔP, Δt) */
		method: text('method', { enum: ['fit', 'entered'] }).notNull(),
		input: jsonb('input').notNull(),
		volumeL: doublePrecision('volume_l').notNull(),
		leakRateMbarLPerS: doublePrecision('leak_rate_mbar_l_per_s').notNull(),
		limitMbarLPerS: doublePrecision('limit_mbar_l_per_s').notNull(),
		passed: boolean('passed').notNull(),
		result: jsonb('result').notNull(),
		createdBy: text('created_by').references(() => user.id),
		createdByName: text('created_by_name').notNull(),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [index('leak_test_equipment_idx').on(t.equipmentId, t.createdAt)]
);

export type LeakTest = typeof leakTest.$inferSelect;
