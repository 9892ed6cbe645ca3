-- TRUNCATE skips row triggers: statement-level guards keep the append-only tables and the audits (signed ones among
-- them) from being emptied in one statement, whoever asks (the app's role has no TRUNCATE privilege either).
CREATE OR REPLACE FUNCTION escapement_no_truncate() RETURNS trigger AS $$
BEGIN
	RAISE EXCEPTION '% is append-only: it cannot be truncated', TG_TABLE_NAME USING ERRCODE = 'integrity_constraint_violation';
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER activity_log_no_truncate BEFORE TRUNCATE ON activity_log FOR EACH STATEMENT EXECUTE FUNCTION escapement_no_truncate();
--> statement-breakpoint
CREATE TRIGGER signatures_no_truncate BEFORE TRUNCATE ON signatures FOR EACH STATEMENT EXECUTE FUNCTION escapement_no_truncate();
--> statement-breakpoint
CREATE TRIGGER review_events_no_truncate BEFORE TRUNCATE ON review_events FOR EACH STATEMENT EXECUTE FUNCTION escapement_no_truncate();
--> statement-breakpoint
CREATE TRIGGER scheme_revisions_no_truncate BEFORE TRUNCATE ON scheme_revisions FOR EACH STATEMENT EXECUTE FUNCTION escapement_no_truncate();
--> statement-breakpoint
CREATE TRIGGER audits_no_truncate BEFORE TRUNCATE ON audits FOR EACH STATEMENT EXECUTE FUNCTION escapement_no_truncate();
