ALTER TABLE "deviation" ADD COLUMN "run_id" text;--> statement-breakpoint
ALTER TABLE "deviation" ADD CONSTRAINT "deviation_run_id_cycle_run_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."cycle_run"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "deviation_run_idx" ON "deviation" USING btree ("run_id");--> statement-breakpoint
-- Deviations raised by a cycle upload before this column existed carry the run id in entry_id,
-- which names step entries: move it to run_id so entry_id only ever names a step entry.
UPDATE "deviation" SET "run_id" = "entry_id", "entry_id" = NULL WHERE "entry_id" IN (SELECT "id" FROM "cycle_run");
