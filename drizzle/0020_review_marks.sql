CREATE TABLE "batch_disposition" (
	"batch_id" text PRIMARY KEY NOT NULL,
	"decision" text NOT NULL,
	"comment" text,
	"signature_id" text NOT NULL,
	"decided_by" text NOT NULL,
	"decided_by_name" text NOT NULL,
	"decided_at" timestamp with time zone NOT NULL
);
--> statement-breakpoint
CREATE TABLE "review_mark" (
	"id" text PRIMARY KEY NOT NULL,
	"batch_id" text NOT NULL,
	"item_key" text NOT NULL,
	"item_hash" text NOT NULL,
	"marked_by" text NOT NULL,
	"marked_by_name" text NOT NULL,
	"marked_at" timestamp with time zone NOT NULL,
	"comment" text
);
--> statement-breakpoint
ALTER TABLE "batch_disposition" ADD CONSTRAINT "batch_disposition_batch_id_batch_id_fk" FOREIGN KEY ("batch_id") REFERENCES "public"."batch"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "batch_disposition" ADD CONSTRAINT "batch_disposition_decided_by_user_id_fk" FOREIGN KEY ("decided_by") REFERENCES "public"."user"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "review_mark" ADD CONSTRAINT "review_mark_batch_id_batch_id_fk" FOREIGN KEY ("batch_id") REFERENCES "public"."batch"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "review_mark" ADD CONSTRAINT "review_mark_marked_by_user_id_fk" FOREIGN KEY ("marked_by") REFERENCES "public"."user"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "review_mark_batch_idx" ON "review_mark" USING btree ("batch_id","item_key");--> statement-breakpoint
CREATE UNIQUE INDEX "review_mark_item_hash_key" ON "review_mark" USING btree ("batch_id","item_key","item_hash");