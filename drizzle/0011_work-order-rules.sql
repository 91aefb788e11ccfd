-- Work orders (5/10) are append-only like every GMP record: the trigger of 0003 on each table.
-- The application role keeps SELECT and INSERT only (default privileges of 0001).
--> statement-breakpoint
CREATE TRIGGER work_orders_append_only BEFORE UPDATE OR DELETE ON work_orders
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER work_orders_no_truncate BEFORE TRUNCATE ON work_orders
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER work_order_plans_append_only BEFORE UPDATE OR DELETE ON work_order_plans
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER work_order_plans_no_truncate BEFORE TRUNCATE ON work_order_plans
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER work_order_transitions_append_only BEFORE UPDATE OR DELETE ON work_order_transitions
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER work_order_transitions_no_truncate BEFORE TRUNCATE ON work_order_transitions
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER step_entries_append_only BEFORE UPDATE OR DELETE ON step_entries
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER step_entries_no_truncate BEFORE TRUNCATE ON step_entries
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER step_signoffs_append_only BEFORE UPDATE OR DELETE ON step_signoffs
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER step_signoffs_no_truncate BEFORE TRUNCATE ON step_signoffs
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER deviations_append_only BEFORE UPDATE OR DELETE ON deviations
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER deviations_no_truncate BEFORE TRUNCATE ON deviations
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER deviation_dispositions_append_only BEFORE UPDATE OR DELETE ON deviation_dispositions
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER deviation_dispositions_no_truncate BEFORE TRUNCATE ON deviation_dispositions
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
-- MR1: new work follows the effective version of its procedure: approved, and not superseded
-- by a later approved version. The application checks it too; this holds whatever writes the row.
CREATE FUNCTION countersign_work_order_effective_version() RETURNS trigger
LANGUAGE plpgsql AS $$
DECLARE
	v record;
BEGIN
	SELECT pv.procedure_id, pv.version INTO v FROM procedure_versions pv WHERE pv.id = NEW.procedure_version_id;
	IF NOT EXISTS (SELECT 1 FROM procedure_approvals a WHERE a.version_id = NEW.procedure_version_id) THEN
		RAISE EXCEPTION 'work order % must follow an approved procedure version', NEW.number
			USING ERRCODE = 'check_violation';
	END IF;
	IF EXISTS (
		SELECT 1 FROM procedure_versions later
		JOIN procedure_approvals a ON a.version_id = later.id
		WHERE later.procedure_id = v.procedure_id AND later.version > v.version
	) THEN
		RAISE EXCEPTION 'work order % must follow the effective procedure version, not a superseded one', NEW.number
			USING ERRCODE = 'check_violation';
	END IF;
	RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER work_orders_effective_version BEFORE INSERT ON work_orders
	FOR EACH ROW EXECUTE FUNCTION countersign_work_order_effective_version();
--> statement-breakpoint
-- ES8 in the database as well: the verifier of a step did not perform it (the newest
-- Performed signoff of that step before this one).
CREATE FUNCTION countersign_verifier_not_performer() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
	IF NEW.kind = 'verified' AND EXISTS (
		SELECT 1 FROM (
			SELECT s.recorded_by FROM step_signoffs s
			WHERE s.work_order_id = NEW.work_order_id AND s.step_key = NEW.step_key AND s.kind = 'performed'
			ORDER BY s.audit_seq DESC LIMIT 1
		) last_performed WHERE last_performed.recorded_by = NEW.recorded_by
	) THEN
		RAISE EXCEPTION 'the verifier of a step must not be its performer'
			USING ERRCODE = 'check_violation';
	END IF;
	RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER step_signoffs_verifier_not_performer BEFORE INSERT ON step_signoffs
	FOR EACH ROW EXECUTE FUNCTION countersign_verifier_not_performer();
