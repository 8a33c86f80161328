-- Step entries, verifications, attachments and blobs are never changed or removed: a correction
-- is a new entry that supersedes the old one (EU GMP Ch. 4.9; 21 CFR 11.10(e)).
CREATE TRIGGER "step_entry_append_only" BEFORE UPDATE OR DELETE OR TRUNCATE ON "step_entry" FOR EACH STATEMENT EXECUTE FUNCTION rimebook_reject_change();--> statement-breakpoint
CREATE TRIGGER "step_verification_append_only" BEFORE UPDATE OR DELETE OR TRUNCATE ON "step_verification" FOR EACH STATEMENT EXECUTE FUNCTION rimebook_reject_change();--> statement-breakpoint
CREATE TRIGGER "attachment_append_only" BEFORE UPDATE OR DELETE OR TRUNCATE ON "attachment" FOR EACH STATEMENT EXECUTE FUNCTION rimebook_reject_change();--> statement-breakpoint
CREATE TRIGGER "blob_append_only" BEFORE UPDATE OR DELETE OR TRUNCATE ON "blob" FOR EACH STATEMENT EXECUTE FUNCTION rimebook_reject_change();
