-- 21 CFR 211.188, 11.10(a), 11.70: an issued batch record's frozen master snapshot, its hash, the
-- quantities scaled at issue, its number, master and size never change; the "issued" signature
-- binds them. Only the execution columns (status, version) and the issue time may still change.
CREATE OR REPLACE FUNCTION batch_frozen() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	IF NEW.snapshot IS DISTINCT FROM OLD.snapshot
		OR NEW.snapshot_hash IS DISTINCT FROM OLD.snapshot_hash
		OR NEW.scaled IS DISTINCT FROM OLD.scaled
		OR NEW.number IS DISTINCT FROM OLD.number
		OR NEW.master_record_id IS DISTINCT FROM OLD.master_record_id
		OR NEW.batch_size IS DISTINCT FROM OLD.batch_size
		OR NEW.batch_size_unit IS DISTINCT FROM OLD.batch_size_unit
		OR NEW.id IS DISTINCT FROM OLD.id
	THEN
		RAISE EXCEPTION 'batch % is issued: its snapshot, number, master and size cannot change', OLD.number USING ERRCODE = 'check_violation';
	END IF;
	RETURN NEW;
END
$$;
--> statement-breakpoint
CREATE TRIGGER batch_frozen BEFORE UPDATE ON batch FOR EACH ROW EXECUTE FUNCTION batch_frozen();
