-- 21 CFR 11.10(f), 211.192: the deviation lifecycle is enforced in the database too, not only by
-- the services (src/lib/domain/deviation-lifecycle.ts): an update behind the application's back
-- cannot reopen a closed deviation, change an investigation under QA approval, or delete one.
-- Allowed changes of status: open → investigating | cancelled; investigating → pending-qa-approval
-- | cancelled; pending-qa-approval → investigating (sent back) | closed | cancelled. Closed and
-- cancelled are final. While pending QA approval the content is frozen: only the transition's own
-- columns (status, version, updated_at, closure_comment, cancel_reason, submitted_*) change.
CREATE OR REPLACE FUNCTION deviation_guard() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	IF TG_OP = 'DELETE' THEN
		RAISE EXCEPTION 'deviation %: a deviation is never deleted; cancel it with a reason instead', OLD.number USING ERRCODE = 'check_violation';
	END IF;
	IF OLD.status IN ('closed', 'cancelled') THEN
		RAISE EXCEPTION 'deviation % is %: it cannot change', OLD.number, OLD.status USING ERRCODE = 'check_violation';
	END IF;
	IF NEW.status IS DISTINCT FROM OLD.status AND NOT (
		(OLD.status = 'open' AND NEW.status IN ('investigating', 'cancelled'))
		OR (OLD.status = 'investigating' AND NEW.status IN ('pending-qa-approval', 'cancelled'))
		OR (OLD.status = 'pending-qa-approval' AND NEW.status IN ('investigating', 'closed', 'cancelled'))
	) THEN
		RAISE EXCEPTION 'deviation %: the status cannot change from % to %', OLD.number, OLD.status, NEW.status USING ERRCODE = 'check_violation';
	END IF;
	IF OLD.status = 'pending-qa-approval' AND (NEW.number, NEW.batch_id, NEW.step_key, NEW.title, NEW.description, NEW.classification, NEW.immediate_action, NEW.investigation, NEW.root_cause, NEW.impact, NEW.capa_refs)
		IS DISTINCT FROM (OLD.number, OLD.batch_id, OLD.step_key, OLD.title, OLD.description, OLD.classification, OLD.immediate_action, OLD.investigation, OLD.root_cause, OLD.impact, OLD.capa_refs) THEN
		RAISE EXCEPTION 'deviation % is pending QA approval: its content cannot change', OLD.number USING ERRCODE = 'check_violation';
	END IF;
	RETURN NEW;
END
$$;
--> statement-breakpoint
CREATE TRIGGER deviation_guard BEFORE UPDATE OR DELETE ON deviation FOR EACH ROW EXECUTE FUNCTION deviation_guard();
