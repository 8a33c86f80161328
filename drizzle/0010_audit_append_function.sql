-- One round trip per audit event (issue 4, "Speed": append overhead). rimebook_append_event does
-- what appendEvent (src/lib/server/audit/ledger.ts) did in four statements: takes the ledger's
-- transaction-scoped advisory lock (the same key as LEDGER_LOCK_KEY), reads the chain head under
-- it, reads the database clock, splices "at" and "seq" into the RFC 8785 text at their sorted key
-- positions, hashes SHA-256(prev_hash || canonical) and inserts the row.
--
-- The caller passes the canonical text in two parts, each made by the RFC 8785 canonicaliser:
-- `head` is the object {action, actorId, actorName, after} without its closing brace, `tail` the
-- members {batchId, before, entityId, entityType, reason} without their braces. RFC 8785 3.2.3
-- sorts the keys, so the full text is head ‖ ,"at":"…", ‖ tail ‖ ,"seq":N}: "at" (a plain ASCII
-- timestamp, no escaping) falls between "after" and "batchId", and "seq" sorts last.
--
-- VOLATILE plpgsql takes a fresh snapshot for each statement under READ COMMITTED, so the head is
-- read after the lock is held. pg_catalog is named so that nothing earlier on the search_path can
-- stand in for the hash.
CREATE OR REPLACE FUNCTION rimebook_append_event(head text, tail text)
	RETURNS TABLE (appended_seq bigint, appended_hash text, appended_at text, appended_prev_hash text)
	LANGUAGE plpgsql VOLATILE
	AS $$
DECLARE
	last_seq bigint;
	last_hash text;
	payload text;
BEGIN
	PERFORM pg_catalog.pg_advisory_xact_lock(7305118021);
	SELECT e.seq, e.hash INTO last_seq, last_hash FROM audit_event AS e ORDER BY e.seq DESC LIMIT 1;
	appended_seq := coalesce(last_seq, 0) + 1;
	last_hash := coalesce(last_hash, pg_catalog.repeat('0', 64));
	appended_at := pg_catalog.to_char(pg_catalog.clock_timestamp() AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"');
	payload := head || ',"at":"' || appended_at || '",' || tail || ',"seq":' || appended_seq::text || '}';
	appended_hash := pg_catalog.encode(pg_catalog.sha256(pg_catalog.convert_to(last_hash || payload, 'UTF8')), 'hex');
	INSERT INTO audit_event (seq, canonical, prev_hash, hash) VALUES (appended_seq, payload, last_hash, appended_hash);
	appended_prev_hash := last_hash;
	RETURN NEXT;
END
$$;
