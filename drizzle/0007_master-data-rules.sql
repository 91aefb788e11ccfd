-- Master data (4/10) is append-only like every GMP record: the trigger of 0003 on each table.
-- The application role keeps SELECT and INSERT only (default privileges of 0001).
--> statement-breakpoint
CREATE TRIGGER equipment_append_only BEFORE UPDATE OR DELETE ON equipment
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER equipment_no_truncate BEFORE TRUNCATE ON equipment
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER equipment_versions_append_only BEFORE UPDATE OR DELETE ON equipment_versions
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER equipment_versions_no_truncate BEFORE TRUNCATE ON equipment_versions
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER equipment_status_changes_append_only BEFORE UPDATE OR DELETE ON equipment_status_changes
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER equipment_status_changes_no_truncate BEFORE TRUNCATE ON equipment_status_changes
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER equipment_usage_append_only BEFORE UPDATE OR DELETE ON equipment_usage
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER equipment_usage_no_truncate BEFORE TRUNCATE ON equipment_usage
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER instruments_append_only BEFORE UPDATE OR DELETE ON instruments
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER instruments_no_truncate BEFORE TRUNCATE ON instruments
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER instrument_versions_append_only BEFORE UPDATE OR DELETE ON instrument_versions
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER instrument_versions_no_truncate BEFORE TRUNCATE ON instrument_versions
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER calibrations_append_only BEFORE UPDATE OR DELETE ON calibrations
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER calibrations_no_truncate BEFORE TRUNCATE ON calibrations
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER parts_append_only BEFORE UPDATE OR DELETE ON parts
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER parts_no_truncate BEFORE TRUNCATE ON parts
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER part_versions_append_only BEFORE UPDATE OR DELETE ON part_versions
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER part_versions_no_truncate BEFORE TRUNCATE ON part_versions
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER part_lots_append_only BEFORE UPDATE OR DELETE ON part_lots
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER part_lots_no_truncate BEFORE TRUNCATE ON part_lots
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER procedures_append_only BEFORE UPDATE OR DELETE ON procedures
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER procedures_no_truncate BEFORE TRUNCATE ON procedures
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER procedure_versions_append_only BEFORE UPDATE OR DELETE ON procedure_versions
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER procedure_versions_no_truncate BEFORE TRUNCATE ON procedure_versions
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER procedure_revisions_append_only BEFORE UPDATE OR DELETE ON procedure_revisions
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER procedure_revisions_no_truncate BEFORE TRUNCATE ON procedure_revisions
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER procedure_approvals_append_only BEFORE UPDATE OR DELETE ON procedure_approvals
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER procedure_approvals_no_truncate BEFORE TRUNCATE ON procedure_approvals
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER qualifications_append_only BEFORE UPDATE OR DELETE ON qualifications
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER qualifications_no_truncate BEFORE TRUNCATE ON qualifications
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
-- An approved procedure version is never changed (MR1, MR5): no revision after its approval.
-- Saves and approvals of one version take the same transaction lock first, so a save racing an
-- approval is decided in one order, and each sees the other once committed.
CREATE FUNCTION countersign_procedure_revision_rule() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	PERFORM pg_advisory_xact_lock(hashtextextended('procedure_version:' || NEW.version_id::text, 0));
	IF EXISTS (SELECT 1 FROM procedure_approvals WHERE version_id = NEW.version_id) THEN
		RAISE EXCEPTION 'countersign: procedure version % is approved and cannot be changed', NEW.version_id
			USING ERRCODE = 'check_violation',
				HINT = 'Start a new draft version, with a reason.';
	END IF;
	RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER procedure_revisions_rule BEFORE INSERT ON procedure_revisions
	FOR EACH ROW EXECUTE FUNCTION countersign_procedure_revision_rule();
--> statement-breakpoint
-- Segregation of duties: the approver wrote no revision of the version and did not start it, and
-- the approval names the version's newest revision.
CREATE FUNCTION countersign_procedure_approval_rule() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	PERFORM pg_advisory_xact_lock(hashtextextended('procedure_version:' || NEW.version_id::text, 0));
	IF NEW.recorded_by IS NULL
		OR EXISTS (SELECT 1 FROM procedure_revisions WHERE version_id = NEW.version_id AND recorded_by = NEW.recorded_by)
		OR EXISTS (SELECT 1 FROM procedure_versions WHERE id = NEW.version_id AND recorded_by = NEW.recorded_by) THEN
		RAISE EXCEPTION 'countersign: the approver of a procedure version cannot be one of its authors'
			USING ERRCODE = 'check_violation';
	END IF;
	IF NEW.revision IS DISTINCT FROM (SELECT max(revision) FROM procedure_revisions WHERE version_id = NEW.version_id) THEN
		RAISE EXCEPTION 'countersign: an approval must name the newest revision of the version'
			USING ERRCODE = 'check_violation';
	END IF;
	RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER procedure_approvals_rule BEFORE INSERT ON procedure_approvals
	FOR EACH ROW EXECUTE FUNCTION countersign_procedure_approval_rule();
