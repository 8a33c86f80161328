-- Cycle series are float64 samples that pglz barely compresses; trying cost most of an import's
-- time. EXTERNAL keeps them out of line and uncompressed, which also lets substring() read only
-- the TOAST chunks a chart zoom window needs (PostgreSQL 15 docs, ALTER TABLE ... SET STORAGE).
-- Applies to values written from now on; rows already stored stay as they are and read the same.
ALTER TABLE "cycle_series" ALTER COLUMN "data" SET STORAGE EXTERNAL;
--> statement-breakpoint
ALTER TABLE "cycle_overview" ALTER COLUMN "data" SET STORAGE EXTERNAL;
