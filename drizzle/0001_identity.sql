CREATE TABLE "acknowledgement" (
	"id" text PRIMARY KEY NOT NULL,
	"user_id" text NOT NULL,
	"statement_version" text NOT NULL,
	"content" jsonb NOT NULL,
	"signature_id" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "passkey" ADD COLUMN "backed_up" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "session" ADD COLUMN "method" text DEFAULT 'password' NOT NULL;--> statement-breakpoint
ALTER TABLE "sign_in_attempt" ADD COLUMN "kind" text DEFAULT 'password' NOT NULL;--> statement-breakpoint
ALTER TABLE "sign_in_attempt" ADD COLUMN "outcome" text DEFAULT 'failed' NOT NULL;--> statement-breakpoint
ALTER TABLE "sign_in_attempt" ADD COLUMN "locks_until" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "user" ADD COLUMN "lockout_cleared_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "acknowledgement" ADD CONSTRAINT "acknowledgement_user_id_user_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."user"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "acknowledgement_user_idx" ON "acknowledgement" USING btree ("user_id");--> statement-breakpoint
CREATE INDEX "signature_signer_idx" ON "signature" USING btree ("signer_id","at");