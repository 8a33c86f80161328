CREATE SEQUENCE "public"."deviation_number_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 9223372036854775807 START WITH 1 CACHE 1;--> statement-breakpoint
CREATE TABLE "reason_code" (
	"code" text PRIMARY KEY NOT NULL,
	"label" text NOT NULL,
	"active" boolean DEFAULT true NOT NULL,
	"sort_order" integer DEFAULT 0 NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "step_entry" (
	"id" text PRIMARY KEY NOT NULL,
	"batch_id" text NOT NULL,
	"step_key" text NOT NULL,
	"values" jsonb NOT NULL,
	"calculations" jsonb NOT NULL,
	"out_of_limits" jsonb NOT NULL,
	"comment" text,
	"reason_code" text,
	"supersedes" text,
	"worked_at" timestamp with time zone NOT NULL,
	"recorded_at" timestamp with time zone NOT NULL,
	"late" boolean DEFAULT false NOT NULL,
	"performed_by" text NOT NULL,
	"performed_by_name" text NOT NULL,
	"signature_id" text NOT NULL
);
--> statement-breakpoint
CREATE TABLE "step_verification" (
	"id" text PRIMARY KEY NOT NULL,
	"batch_id" text NOT NULL,
	"step_key" text NOT NULL,
	"entry_id" text NOT NULL,
	"verified_by" text NOT NULL,
	"verified_by_name" text NOT NULL,
	"verified_at" timestamp with time zone NOT NULL,
	"signature_id" text NOT NULL
);
--> statement-breakpoint
CREATE TABLE "deviation" (
	"id" text PRIMARY KEY NOT NULL,
	"number" text NOT NULL,
	"batch_id" text,
	"step_key" text,
	"entry_id" text,
	"source" text NOT NULL,
	"kind" text NOT NULL,
	"title" text NOT NULL,
	"description" text NOT NULL,
	"status" text DEFAULT 'open' NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"created_by" text,
	"created_by_name" text NOT NULL
);
--> statement-breakpoint
CREATE TABLE "attachment" (
	"id" text PRIMARY KEY NOT NULL,
	"batch_id" text NOT NULL,
	"step_key" text NOT NULL,
	"field_key" text,
	"sha256" text NOT NULL,
	"filename" text NOT NULL,
	"content_type" text NOT NULL,
	"size" bigint NOT NULL,
	"uploaded_by" text NOT NULL,
	"uploaded_by_name" text NOT NULL,
	"uploaded_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "blob" (
	"sha256" text PRIMARY KEY NOT NULL,
	"size" bigint NOT NULL,
	"content_type" text NOT NULL,
	"store" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "step_entry" ADD CONSTRAINT "step_entry_batch_id_batch_id_fk" FOREIGN KEY ("batch_id") REFERENCES "public"."batch"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "step_entry" ADD CONSTRAINT "step_entry_reason_code_reason_code_code_fk" FOREIGN KEY ("reason_code") REFERENCES "public"."reason_code"("code") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "step_entry" ADD CONSTRAINT "step_entry_performed_by_user_id_fk" FOREIGN KEY ("performed_by") REFERENCES "public"."user"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "step_verification" ADD CONSTRAINT "step_verification_batch_id_batch_id_fk" FOREIGN KEY ("batch_id") REFERENCES "public"."batch"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "step_verification" ADD CONSTRAINT "step_verification_entry_id_step_entry_id_fk" FOREIGN KEY ("entry_id") REFERENCES "public"."step_entry"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "step_verification" ADD CONSTRAINT "step_verification_verified_by_user_id_fk" FOREIGN KEY ("verified_by") REFERENCES "public"."user"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "deviation" ADD CONSTRAINT "deviation_batch_id_batch_id_fk" FOREIGN KEY ("batch_id") REFERENCES "public"."batch"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "deviation" ADD CONSTRAINT "deviation_created_by_user_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."user"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "attachment" ADD CONSTRAINT "attachment_batch_id_batch_id_fk" FOREIGN KEY ("batch_id") REFERENCES "public"."batch"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "attachment" ADD CONSTRAINT "attachment_sha256_blob_sha256_fk" FOREIGN KEY ("sha256") REFERENCES "public"."blob"("sha256") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "attachment" ADD CONSTRAINT "attachment_uploaded_by_user_id_fk" FOREIGN KEY ("uploaded_by") REFERENCES "public"."user"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "step_entry_batch_idx" ON "step_entry" USING btree ("batch_id","step_key");--> statement-breakpoint
CREATE UNIQUE INDEX "step_entry_supersedes_key" ON "step_entry" USING btree ("supersedes");--> statement-breakpoint
CREATE INDEX "step_verification_batch_idx" ON "step_verification" USING btree ("batch_id");--> statement-breakpoint
CREATE UNIQUE INDEX "step_verification_entry_key" ON "step_verification" USING btree ("entry_id");--> statement-breakpoint
CREATE UNIQUE INDEX "deviation_number_key" ON "deviation" USING btree ("number");--> statement-breakpoint
CREATE INDEX "deviation_batch_idx" ON "deviation" USING btree ("batch_id","step_key");--> statement-breakpoint
CREATE INDEX "deviation_status_idx" ON "deviation" USING btree ("status");--> statement-breakpoint
CREATE INDEX "attachment_batch_idx" ON "attachment" USING btree ("batch_id","step_key");