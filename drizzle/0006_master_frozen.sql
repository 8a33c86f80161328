-- 21 CFR 211.186, 11.10(a): once a master record version leaves draft, its content never changes.
-- Only the lifecycle columns (status, the people and times of each step) may still change; the
-- template's own header.status mirrors the status and is the one part of the jsonb allowed to.
-- A version that has left draft is never deleted (11.10(c), (e)).
CREATE OR REPLACE FUNCTION master_record_frozen() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	IF TG_OP = 'DELETE' THEN
		IF OLD.status <> 'draft' THEN
			RAISE EXCEPTION 'master record % v% is %: it cannot be deleted', OLD.code, OLD.version, OLD.status USING ERRCODE = 'check_violation';
		END IF;
		RETURN OLD;
	END IF;
	IF OLD.status <> 'draft' AND (
		(NEW.template #- '{header,status}') IS DISTINCT FROM (OLD.template #- '{header,status}')
		OR NEW.template_hash IS DISTINCT FROM OLD.template_hash
		OR NEW.code IS DISTINCT FROM OLD.code
		OR NEW.version IS DISTINCT FROM OLD.version
		OR NEW.product IS DISTINCT FROM OLD.product
	) THEN
		RAISE EXCEPTION 'master record % v% is %: its content cannot change', OLD.code, OLD.version, OLD.status USING ERRCODE = 'check_violation';
	END IF;
	RETURN NEW;
END
$$;
--> statement-breakpoint
CREATE TRIGGER master_record_frozen BEFORE UPDATE OR DELETE ON master_record FOR EACH ROW EXECUTE FUNCTION master_record_frozen();
