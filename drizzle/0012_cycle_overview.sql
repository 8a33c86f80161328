CREATE TABLE "cycle_overview" (
	"run_id" text PRIMARY KEY NOT NULL,
	"buckets" integer NOT NULL,
	"rows" integer NOT NULL,
	"samples" integer NOT NULL,
	"channels" jsonb NOT NULL,
	"data" "bytea" NOT NULL
);
--> statement-breakpoint
ALTER TABLE "cycle_overview" ADD CONSTRAINT "cycle_overview_run_id_cycle_run_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."cycle_run"("id") ON DELETE no action ON UPDATE no action;