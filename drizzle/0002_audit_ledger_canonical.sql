-- Ledger format with the stored canonical payload (see src/lib/server/db/tables/audit.ts).
-- Written by hand over drizzle-kit's output: the payload column must exist before the columns
-- generated from it, and the indexes on the regenerated columns are created again.
DO $$
BEGIN
	IF EXISTS (SELECT 1 FROM "audit_event") THEN
		RAISE EXCEPTION 'This data folder holds audit events from the pre-release scaffold ledger, which stored no canonical payload. Nothing was changed. Fix: it held only demo data; delete the data folder (or database) and start again.';
	END IF;
END $$;--> statement-breakpoint
-- IMMUTABLE is true here: the payload''s "at" is always ISO 8601 in UTC with a "Z", so the cast
-- does not depend on the session''s TimeZone or DateStyle (PostgreSQL needs IMMUTABLE for a
-- generated column).
CREATE OR REPLACE FUNCTION rimebook_audit_instant(value text) RETURNS timestamptz
	LANGUAGE sql IMMUTABLE STRICT PARALLEL SAFE
	AS $$ SELECT value::timestamptz $$;--> statement-breakpoint
ALTER TABLE "audit_event" ADD COLUMN "canonical" text NOT NULL;--> statement-breakpoint
ALTER TABLE "audit_event" drop column "at";--> statement-breakpoint
ALTER TABLE "audit_event" ADD COLUMN "at" timestamp with time zone GENERATED ALWAYS AS (rimebook_audit_instant(((canonical)::jsonb ->> 'at'))) STORED NOT NULL;--> statement-breakpoint
ALTER TABLE "audit_event" drop column "actor_id";--> statement-breakpoint
ALTER TABLE "audit_event" ADD COLUMN "actor_id" text GENERATED ALWAYS AS (((canonical)::jsonb ->> 'actorId')) STORED;--> statement-breakpoint
ALTER TABLE "audit_event" drop column "actor_name";--> statement-breakpoint
ALTER TABLE "audit_event" ADD COLUMN "actor_name" text GENERATED ALWAYS AS (((canonical)::jsonb ->> 'actorName')) STORED NOT NULL;--> statement-breakpoint
ALTER TABLE "audit_event" drop column "action";--> statement-breakpoint
ALTER TABLE "audit_event" ADD COLUMN "action" text GENERATED ALWAYS AS (((canonical)::jsonb ->> 'action')) STORED NOT NULL;--> statement-breakpoint
ALTER TABLE "audit_event" drop column "entity_type";--> statement-breakpoint
ALTER TABLE "audit_event" ADD COLUMN "entity_type" text GENERATED ALWAYS AS (((canonical)::jsonb ->> 'entityType')) STORED NOT NULL;--> statement-breakpoint
ALTER TABLE "audit_event" drop column "entity_id";--> statement-breakpoint
ALTER TABLE "audit_event" ADD COLUMN "entity_id" text GENERATED ALWAYS AS (((canonical)::jsonb ->> 'entityId')) STORED;--> statement-breakpoint
ALTER TABLE "audit_event" drop column "batch_id";--> statement-breakpoint
ALTER TABLE "audit_event" ADD COLUMN "batch_id" text GENERATED ALWAYS AS (((canonical)::jsonb ->> 'batchId')) STORED;--> statement-breakpoint
ALTER TABLE "audit_event" drop column "before";--> statement-breakpoint
ALTER TABLE "audit_event" ADD COLUMN "before" jsonb GENERATED ALWAYS AS (nullif(((canonical)::jsonb -> 'before'), 'null'::jsonb)) STORED;--> statement-breakpoint
ALTER TABLE "audit_event" drop column "after";--> statement-breakpoint
ALTER TABLE "audit_event" ADD COLUMN "after" jsonb GENERATED ALWAYS AS (nullif(((canonical)::jsonb -> 'after'), 'null'::jsonb)) STORED;--> statement-breakpoint
ALTER TABLE "audit_event" drop column "reason";--> statement-breakpoint
ALTER TABLE "audit_event" ADD COLUMN "reason" text GENERATED ALWAYS AS (((canonical)::jsonb ->> 'reason')) STORED;--> statement-breakpoint
CREATE INDEX "audit_event_batch_idx" ON "audit_event" USING btree ("batch_id","seq");--> statement-breakpoint
CREATE INDEX "audit_event_entity_idx" ON "audit_event" USING btree ("entity_type","entity_id","seq");--> statement-breakpoint
CREATE INDEX "audit_event_actor_idx" ON "audit_event" USING btree ("actor_id","seq");--> statement-breakpoint
CREATE INDEX "audit_event_at_idx" ON "audit_event" USING btree ("at");--> statement-breakpoint
CREATE TABLE "audit_checkpoint" (
	"size" bigint PRIMARY KEY NOT NULL,
	"root" text NOT NULL,
	"head_hash" text NOT NULL,
	"at" timestamp with time zone NOT NULL,
	"statement" text NOT NULL,
	"signature" text NOT NULL,
	"key_id" text NOT NULL,
	"frontier" jsonb NOT NULL
);
--> statement-breakpoint
CREATE TABLE "audit_signing_key" (
	"id" text PRIMARY KEY NOT NULL,
	"public_key" text NOT NULL,
	"private_key" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
