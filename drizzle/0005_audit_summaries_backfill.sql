-- The summaries of audits stored before the table existed, derived from their results (which never change).
INSERT INTO audit_summaries (audit_id, summary, cycle_count)
	SELECT id, results - 'cycles' - 'cycleAffinitiesKT', coalesce((results ->> 'cycleCount')::int, jsonb_array_length(results -> 'cycles'))
	FROM audits
	ON CONFLICT (audit_id) DO NOTHING;
--> statement-breakpoint
-- A summary is part of its stored audit: it is never edited (deleting a draft audit deletes its summary).
CREATE TRIGGER audit_summaries_append_only BEFORE UPDATE ON audit_summaries
	FOR EACH ROW EXECUTE FUNCTION escapement_append_only();
