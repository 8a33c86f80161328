ALTER TABLE "master_record" ADD COLUMN "based_on_id" text;--> statement-breakpoint
ALTER TABLE "master_record" ADD COLUMN "authors" text[] DEFAULT '{}'::text[] NOT NULL;--> statement-breakpoint
ALTER TABLE "master_record" ADD COLUMN "updated_at" timestamp with time zone DEFAULT now() NOT NULL;--> statement-breakpoint
ALTER TABLE "master_record" ADD COLUMN "revision" integer DEFAULT 1 NOT NULL;--> statement-breakpoint
ALTER TABLE "master_record" ADD COLUMN "submitted_by" text;--> statement-breakpoint
ALTER TABLE "master_record" ADD COLUMN "submitted_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "master_record" ADD COLUMN "approved_by" text;--> statement-breakpoint
ALTER TABLE "master_record" ADD COLUMN "approved_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "master_record" ADD COLUMN "superseded_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "master_record" ADD COLUMN "retired_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "master_record" ADD CONSTRAINT "master_record_submitted_by_user_id_fk" FOREIGN KEY ("submitted_by") REFERENCES "public"."user"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "master_record" ADD CONSTRAINT "master_record_approved_by_user_id_fk" FOREIGN KEY ("approved_by") REFERENCES "public"."user"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "master_record_effective_key" ON "master_record" USING btree ("code") WHERE "master_record"."status" = 'effective';--> statement-breakpoint
CREATE INDEX "master_record_status_idx" ON "master_record" USING btree ("status");