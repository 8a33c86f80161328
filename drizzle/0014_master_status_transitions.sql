-- 21 CFR 11.10(f): the permitted sequence of steps is enforced in the database too, not only by
-- the services (src/lib/domain/master-lifecycle.ts, `lifecycle`): without this, an update behind
-- the application's back could turn an effective version into a draft and make it editable again
-- (0006 freezes content only while the status is not draft). Allowed changes of status:
--   draft → in-review (submit); in-review → draft (return) | approved (approve);
--   approved → effective (make effective) | retired; effective → superseded | retired;
--   superseded → retired. Retired is final. Inserts are not checked here (a version is created
-- as a draft by the services; tests and fixtures may insert other states directly).
CREATE OR REPLACE FUNCTION master_record_status_transition() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	IF NEW.status IS DISTINCT FROM OLD.status AND NOT (
		(OLD.status = 'draft' AND NEW.status = 'in-review')
		OR (OLD.status = 'in-review' AND NEW.status IN ('draft', 'approved'))
		OR (OLD.status = 'approved' AND NEW.status IN ('effective', 'retired'))
		OR (OLD.status = 'effective' AND NEW.status IN ('superseded', 'retired'))
		OR (OLD.status = 'superseded' AND NEW.status = 'retired')
	) THEN
		RAISE EXCEPTION 'master record % v%: the status cannot change from % to %', OLD.code, OLD.version, OLD.status, NEW.status USING ERRCODE = 'check_violation';
	END IF;
	RETURN NEW;
END
$$;
--> statement-breakpoint
CREATE TRIGGER master_record_status_transition BEFORE UPDATE ON master_record FOR EACH ROW EXECUTE FUNCTION master_record_status_transition();
