-- Append-only in the database itself (21 CFR 11.10(e): audit trail entries never obscure earlier
-- ones; 11.70: signatures cannot be removed from their records). Statement-level triggers reject
-- every UPDATE, DELETE and TRUNCATE, even one that matches no row, for any role including the
-- table owner. Only someone who can disable triggers (a superuser or the owner, with
-- ALTER TABLE ... DISABLE TRIGGER) gets past them, and then the hash chain and the signed
-- checkpoints show what was changed (verifyChain).
CREATE OR REPLACE FUNCTION rimebook_reject_change() RETURNS trigger
	LANGUAGE plpgsql
	AS $$
BEGIN
	RAISE EXCEPTION 'Rimebook: table % is append-only; % is not allowed', TG_TABLE_NAME, TG_OP
		USING ERRCODE = 'RB001', HINT = 'Audit events, signatures and checkpoints are never changed or removed; record a new event instead.';
END
$$;--> statement-breakpoint
CREATE TRIGGER "audit_event_append_only" BEFORE UPDATE OR DELETE OR TRUNCATE ON "audit_event" FOR EACH STATEMENT EXECUTE FUNCTION rimebook_reject_change();--> statement-breakpoint
CREATE TRIGGER "signature_append_only" BEFORE UPDATE OR DELETE OR TRUNCATE ON "signature" FOR EACH STATEMENT EXECUTE FUNCTION rimebook_reject_change();--> statement-breakpoint
CREATE TRIGGER "audit_checkpoint_append_only" BEFORE UPDATE OR DELETE OR TRUNCATE ON "audit_checkpoint" FOR EACH STATEMENT EXECUTE FUNCTION rimebook_reject_change();--> statement-breakpoint
CREATE TRIGGER "audit_signing_key_append_only" BEFORE UPDATE OR DELETE OR TRUNCATE ON "audit_signing_key" FOR EACH STATEMENT EXECUTE FUNCTION rimebook_reject_change();
