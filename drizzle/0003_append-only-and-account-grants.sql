-- One reusable trigger function that refuses UPDATE, DELETE and TRUNCATE, for every role, the
-- owner included (only a superuser can get around a trigger; verification in 3/10 catches that).
-- Attach it to every GMP record table and the audit trail:
--   CREATE TRIGGER <table>_append_only BEFORE UPDATE OR DELETE ON <table>
--     FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--   CREATE TRIGGER <table>_no_truncate BEFORE TRUNCATE ON <table>
--     FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
CREATE FUNCTION countersign_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	RAISE EXCEPTION 'countersign: % on % is not allowed: records are append-only', TG_OP, TG_TABLE_NAME
		USING ERRCODE = 'insufficient_privilege',
			HINT = 'Add a new row that supersedes the old one, with a reason.';
END;
$$;
--> statement-breakpoint
CREATE TRIGGER audit_event_append_only BEFORE UPDATE OR DELETE ON audit_event
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER audit_event_no_truncate BEFORE TRUNCATE ON audit_event
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
-- Accounts are state, not records: every change of them is an audit event. The app may change
-- these columns and no others; never id, username (ES5: usernames are never reassigned) or
-- created_at. Accounts are never deleted.
GRANT UPDATE (full_name, email, roles, password_hash, must_change_password, active, locked_at,
	failed_sign_ins, password_changed_at, last_sign_in_at, deactivated_at) ON accounts TO countersign_app;
--> statement-breakpoint
-- Sessions: last_seen_at moves on every request; ended_at and end_reason close a session.
GRANT UPDATE (last_seen_at, ended_at, end_reason) ON sessions TO countersign_app;
--> statement-breakpoint
-- Throttle counters are bookkeeping, reset after a success.
GRANT UPDATE, DELETE ON sign_in_throttle TO countersign_app;
--> statement-breakpoint
CREATE INDEX sessions_account_open ON sessions (account_id) WHERE ended_at IS NULL;
--> statement-breakpoint
CREATE INDEX audit_event_entity ON audit_event (entity_type, entity_id);
