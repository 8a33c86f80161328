ALTER TABLE "deviation" ADD COLUMN "classification" text;--> statement-breakpoint
ALTER TABLE "deviation" ADD COLUMN "immediate_action" text;--> statement-breakpoint
ALTER TABLE "deviation" ADD COLUMN "investigation" text;--> statement-breakpoint
ALTER TABLE "deviation" ADD COLUMN "root_cause" text;--> statement-breakpoint
ALTER TABLE "deviation" ADD COLUMN "impact" text;--> statement-breakpoint
ALTER TABLE "deviation" ADD COLUMN "capa_refs" jsonb DEFAULT '[]'::jsonb NOT NULL;--> statement-breakpoint
ALTER TABLE "deviation" ADD COLUMN "cancel_reason" text;--> statement-breakpoint
ALTER TABLE "deviation" ADD COLUMN "closure_comment" text;--> statement-breakpoint
ALTER TABLE "deviation" ADD COLUMN "submitted_by" text;--> statement-breakpoint
ALTER TABLE "deviation" ADD COLUMN "submitted_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "deviation" ADD COLUMN "version" integer DEFAULT 1 NOT NULL;--> statement-breakpoint
ALTER TABLE "deviation" ADD COLUMN "updated_at" timestamp with time zone DEFAULT now() NOT NULL;--> statement-breakpoint
ALTER TABLE "deviation" ADD CONSTRAINT "deviation_submitted_by_user_id_fk" FOREIGN KEY ("submitted_by") REFERENCES "public"."user"("id") ON DELETE no action ON UPDATE no action;