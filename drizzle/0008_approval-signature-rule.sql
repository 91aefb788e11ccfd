-- The approval rule of 0007, tightened (review of 4/10): the signature an approval names must be
-- an Approved signature of this very procedure version by the approver. Otherwise as before:
-- the approver wrote none of the version, and the approval names its newest revision.
CREATE OR REPLACE FUNCTION countersign_procedure_approval_rule() RETURNS trigger LANGUAGE plpgsql AS $$
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
	IF NOT EXISTS (
		SELECT 1 FROM signatures
		WHERE id = NEW.signature_id AND meaning = 'approved' AND record_type = 'procedure_version'
			AND record_id = NEW.version_id::text AND signer_id = NEW.recorded_by
	) THEN
		RAISE EXCEPTION 'countersign: an approval needs the approver''s Approved signature of this version'
			USING ERRCODE = 'check_violation';
	END IF;
	RETURN NEW;
END;
$$;
