CREATE TABLE "equipment_event" (
	"id" text PRIMARY KEY NOT NULL,
	"equipment_id" text NOT NULL,
	"instrument_id" text,
	"kind" text NOT NULL,
	"from_status" text,
	"to_status" text,
	"calibrated_on" date,
	"calibration_due_on" date,
	"reference" text,
	"reason" text NOT NULL,
	"actor_id" text,
	"actor_name" text NOT NULL,
	"at" timestamp with time zone DEFAULT now() NOT NULL,
	"ordinal" integer DEFAULT 0 NOT NULL
);
--> statement-breakpoint
CREATE TABLE "instrument" (
	"id" text PRIMARY KEY NOT NULL,
	"equipment_id" text NOT NULL,
	"tag" text NOT NULL,
	"name" text NOT NULL,
	"role" text NOT NULL,
	"unit" text NOT NULL,
	"status" text DEFAULT 'in-service' NOT NULL,
	"calibrated_on" date,
	"calibration_due_on" date,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "cycle_mapping" (
	"id" text PRIMARY KEY NOT NULL,
	"equipment_id" text NOT NULL,
	"name" text NOT NULL,
	"mapping" jsonb NOT NULL,
	"updated_by" text,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "cycle_run" (
	"id" text PRIMARY KEY NOT NULL,
	"equipment_id" text NOT NULL,
	"batch_id" text,
	"step_key" text,
	"file_name" text NOT NULL,
	"file_sha256" text NOT NULL,
	"file_bytes" integer NOT NULL,
	"mapping" jsonb NOT NULL,
	"recipe" jsonb,
	"analysis" jsonb NOT NULL,
	"samples" integer NOT NULL,
	"duration_s" double precision NOT NULL,
	"logger_start" text,
	"uploaded_by" text,
	"uploaded_by_name" text NOT NULL,
	"uploaded_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "cycle_series" (
	"run_id" text NOT NULL,
	"ordinal" integer NOT NULL,
	"column" text NOT NULL,
	"role" text NOT NULL,
	"unit" text NOT NULL,
	"data" "bytea" NOT NULL,
	CONSTRAINT "cycle_series_run_id_ordinal_pk" PRIMARY KEY("run_id","ordinal")
);
--> statement-breakpoint
CREATE TABLE "leak_test" (
	"id" text PRIMARY KEY NOT NULL,
	"equipment_id" text NOT NULL,
	"run_id" text,
	"method" text NOT NULL,
	"input" jsonb NOT NULL,
	"volume_l" double precision NOT NULL,
	"leak_rate_mbar_l_per_s" double precision NOT NULL,
	"limit_mbar_l_per_s" double precision NOT NULL,
	"passed" boolean NOT NULL,
	"result" jsonb NOT NULL,
	"created_by" text,
	"created_by_name" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "equipment_event" ADD CONSTRAINT "equipment_event_equipment_id_equipment_id_fk" FOREIGN KEY ("equipment_id") REFERENCES "public"."equipment"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "equipment_event" ADD CONSTRAINT "equipment_event_instrument_id_instrument_id_fk" FOREIGN KEY ("instrument_id") REFERENCES "public"."instrument"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "equipment_event" ADD CONSTRAINT "equipment_event_actor_id_user_id_fk" FOREIGN KEY ("actor_id") REFERENCES "public"."user"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "instrument" ADD CONSTRAINT "instrument_equipment_id_equipment_id_fk" FOREIGN KEY ("equipment_id") REFERENCES "public"."equipment"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "cycle_mapping" ADD CONSTRAINT "cycle_mapping_equipment_id_equipment_id_fk" FOREIGN KEY ("equipment_id") REFERENCES "public"."equipment"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "cycle_mapping" ADD CONSTRAINT "cycle_mapping_updated_by_user_id_fk" FOREIGN KEY ("updated_by") REFERENCES "public"."user"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "cycle_run" ADD CONSTRAINT "cycle_run_equipment_id_equipment_id_fk" FOREIGN KEY ("equipment_id") REFERENCES "public"."equipment"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "cycle_run" ADD CONSTRAINT "cycle_run_batch_id_batch_id_fk" FOREIGN KEY ("batch_id") REFERENCES "public"."batch"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "cycle_run" ADD CONSTRAINT "cycle_run_uploaded_by_user_id_fk" FOREIGN KEY ("uploaded_by") REFERENCES "public"."user"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "cycle_series" ADD CONSTRAINT "cycle_series_run_id_cycle_run_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."cycle_run"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "leak_test" ADD CONSTRAINT "leak_test_equipment_id_equipment_id_fk" FOREIGN KEY ("equipment_id") REFERENCES "public"."equipment"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "leak_test" ADD CONSTRAINT "leak_test_run_id_cycle_run_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."cycle_run"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "leak_test" ADD CONSTRAINT "leak_test_created_by_user_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."user"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "equipment_event_equipment_idx" ON "equipment_event" USING btree ("equipment_id","at");--> statement-breakpoint
CREATE UNIQUE INDEX "instrument_tag_key" ON "instrument" USING btree ("equipment_id","tag");--> statement-breakpoint
CREATE UNIQUE INDEX "cycle_mapping_name_key" ON "cycle_mapping" USING btree ("equipment_id","name");--> statement-breakpoint
CREATE INDEX "cycle_run_equipment_idx" ON "cycle_run" USING btree ("equipment_id","uploaded_at");--> statement-breakpoint
CREATE INDEX "cycle_run_batch_idx" ON "cycle_run" USING btree ("batch_id");--> statement-breakpoint
CREATE INDEX "leak_test_equipment_idx" ON "leak_test" USING btree ("equipment_id","created_at");