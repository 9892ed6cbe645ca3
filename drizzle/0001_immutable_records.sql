-- A signed audit, its inputs, its signature and its review history cannot be changed or deleted,
-- whatever the client: the app, the API or plain SQL.
CREATE OR REPLACE FUNCTION escapement_guard_signed_audit() RETURNS trigger AS $$
BEGIN
	IF TG_OP = 'DELETE' THEN
		IF OLD.status = 'signed' THEN
			RAISE EXCEPTION 'audit % is signed and cannot be deleted', OLD.id USING ERRCODE = 'integrity_constraint_violation';
		END IF;
		RETURN OLD;
	END IF;
	IF OLD.status = 'signed' THEN
		RAISE EXCEPTION 'audit % is signed and cannot be changed', OLD.id USING ERRCODE = 'integrity_constraint_violation';
	END IF;
	-- Inputs and results are fixed from the moment the audit is stored; only the review status moves.
	IF NEW.inputs IS DISTINCT FROM OLD.inputs OR NEW.results IS DISTINCT FROM OLD.results OR NEW.sha256 IS DISTINCT FROM OLD.sha256
		OR NEW.revision_id IS DISTINCT FROM OLD.revision_id OR NEW.scheme_id IS DISTINCT FROM OLD.scheme_id
		OR NEW.lab_id IS DISTINCT FROM OLD.lab_id OR NEW.created_by IS DISTINCT FROM OLD.created_by THEN
		RAISE EXCEPTION 'audit % : inputs and results of a stored audit cannot be changed; run a new audit', OLD.id
			USING ERRCODE = 'integrity_constraint_violation';
	END IF;
	RETURN NEW;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER audits_guard BEFORE UPDATE OR DELETE ON audits
	FOR EACH ROW EXECUTE FUNCTION escapement_guard_signed_audit();
--> statement-breakpoint
CREATE OR REPLACE FUNCTION escapement_append_only() RETURNS trigger AS $$
BEGIN
	RAISE EXCEPTION '% is append-only: rows cannot be changed or deleted', TG_TABLE_NAME USING ERRCODE = 'integrity_constraint_violation';
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER signatures_append_only BEFORE UPDATE OR DELETE ON signatures
	FOR EACH ROW EXECUTE FUNCTION escapement_append_only();
--> statement-breakpoint
CREATE TRIGGER review_events_append_only BEFORE UPDATE OR DELETE ON review_events
	FOR EACH ROW EXECUTE FUNCTION escapement_append_only();
--> statement-breakpoint
CREATE TRIGGER activity_log_append_only BEFORE UPDATE OR DELETE ON activity_log
	FOR EACH ROW EXECUTE FUNCTION escapement_append_only();
--> statement-breakpoint
-- A revision that an audit was run on is part of that audit's inputs: revisions are never edited.
CREATE TRIGGER scheme_revisions_append_only BEFORE UPDATE OR DELETE ON scheme_revisions
	FOR EACH ROW EXECUTE FUNCTION escapement_append_only();
--> statement-breakpoint
-- A signed audit's scheme cannot be deleted either (the foreign keys restrict it), nor can its lab lose it.
CREATE OR REPLACE FUNCTION escapement_guard_signed_signature() RETURNS trigger AS $$
BEGIN
	IF (SELECT status FROM audits WHERE id = NEW.audit_id) IS DISTINCT FROM 'signed' THEN
		RAISE EXCEPTION 'a signature needs its audit to be marked signed in the same transaction' USING ERRCODE = 'integrity_constraint_violation';
	END IF;
	IF NEW.sha256 IS DISTINCT FROM (SELECT sha256 FROM audits WHERE id = NEW.audit_id) THEN
		RAISE EXCEPTION 'the signed hash does not match the audit''s hash' USING ERRCODE = 'integrity_constraint_violation';
	END IF;
	RETURN NEW;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER signatures_match_audit BEFORE INSERT ON signatures
	FOR EACH ROW EXECUTE FUNCTION escapement_guard_signed_signature();
