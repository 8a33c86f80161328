-- 21 CFR 211.192, 11.10(e); Annex 11, 15: review marks and dispositions are records: never changed
-- or removed (a new mark after a change is a new row).
CREATE TRIGGER "review_mark_append_only" BEFORE UPDATE OR DELETE OR TRUNCATE ON "review_mark" FOR EACH STATEMENT EXECUTE FUNCTION rimebook_reject_change();--> statement-breakpoint
CREATE TRIGGER "batch_disposition_append_only" BEFORE UPDATE OR DELETE OR TRUNCATE ON "batch_disposition" FOR EACH STATEMENT EXECUTE FUNCTION rimebook_reject_change();--> statement-breakpoint
-- A released or rejected batch is final (design.md: the batch becomes read-only): its row can
-- no longer change at all, neither its status nor its version.
CREATE OR REPLACE FUNCTION batch_disposed() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	IF OLD.status IN ('released', 'rejected') THEN
		RAISE EXCEPTION 'batch % is %: it cannot change any more', OLD.number, OLD.status USING ERRCODE = 'check_violation';
	END IF;
	RETURN NEW;
END
$$;
--> statement-breakpoint
CREATE TRIGGER batch_disposed BEFORE UPDATE ON batch FOR EACH ROW EXECUTE FUNCTION batch_disposed();
