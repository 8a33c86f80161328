-- Runs imported before 0015 get their series SHA-256 from the stored bytes, computed exactly as
-- hashSeries (src/lib/server/cycles/series-store.ts): the time axis (ordinal 0), then per channel
-- "\n<column>\n<role>\n<unit>\n" and its bytes, in ordinal order. Done before the triggers below,
-- which forbid any later UPDATE.
UPDATE "cycle_run" AS r SET "series_sha256" = s.hash
FROM (
	SELECT "run_id", encode(sha256(string_agg(
		CASE WHEN "ordinal" = 0 THEN "data"
		ELSE convert_to(E'\n' || "column" || E'\n' || "role" || E'\n' || "unit" || E'\n', 'UTF8') || "data" END,
		''::bytea ORDER BY "ordinal")), 'hex') AS hash
	FROM "cycle_series" GROUP BY "run_id"
) AS s
WHERE s."run_id" = r."id" AND r."series_sha256" IS NULL;--> statement-breakpoint
-- Cycle evidence is never changed or removed once imported: step-entry signatures bind a run's
-- file and series SHA-256 (21 CFR 11.70), and the run, its series, overview and leak tests are
-- original records (21 CFR 11.10(a), (e); EU GMP Annex 11 §7.1). Nothing in the application
-- updates these rows after their insert, so no column is exempt. Statement-level, like 0003/0009.
CREATE TRIGGER "cycle_run_append_only" BEFORE UPDATE OR DELETE OR TRUNCATE ON "cycle_run" FOR EACH STATEMENT EXECUTE FUNCTION rimebook_reject_change();--> statement-breakpoint
CREATE TRIGGER "cycle_series_append_only" BEFORE UPDATE OR DELETE OR TRUNCATE ON "cycle_series" FOR EACH STATEMENT EXECUTE FUNCTION rimebook_reject_change();--> statement-breakpoint
CREATE TRIGGER "cycle_overview_append_only" BEFORE UPDATE OR DELETE OR TRUNCATE ON "cycle_overview" FOR EACH STATEMENT EXECUTE FUNCTION rimebook_reject_change();--> statement-breakpoint
CREATE TRIGGER "leak_test_append_only" BEFORE UPDATE OR DELETE OR TRUNCATE ON "leak_test" FOR EACH STATEMENT EXECUTE FUNCTION rimebook_reject_change();
