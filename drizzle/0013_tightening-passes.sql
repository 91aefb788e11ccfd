CREATE TABLE "tightening_passes" (
	"id" uuid PRIMARY KEY NOT NULL,
	"work_order_id" uuid NOT NULL,
	"step_key" text NOT NULL,
	"field_key" text NOT NULL,
	"round" integer NOT NULL,
	"pass" integer NOT NULL,
	"name" text NOT NULL,
	"target_torque" double precision,
	"unit" text NOT NULL,
	"reason" text,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "tightening_passes_once" UNIQUE("work_order_id","step_key","field_key","round","pass"),
	CONSTRAINT "tightening_passes_numbers" CHECK ("tightening_passes"."round" >= 1 and "tightening_passes"."pass" >= 0),
	CONSTRAINT "tightening_passes_restart_reason" CHECK (("tightening_passes"."pass" = 0) = ("tightening_passes"."reason" is not null))
);
--> statement-breakpoint
ALTER TABLE "tightening_passes" ADD CONSTRAINT "tightening_passes_work_order_id_work_orders_id_fk" FOREIGN KEY ("work_order_id") REFERENCES "public"."work_orders"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "tightening_passes" ADD CONSTRAINT "tightening_passes_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
-- Tightening passes are append-only like every GMP record (the trigger of 0003).
CREATE TRIGGER tightening_passes_append_only BEFORE UPDATE OR DELETE ON tightening_passes
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER tightening_passes_no_truncate BEFORE TRUNCATE ON tightening_passes
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
-- Passes are ticked in order (6/10 item 8): pass n of a round needs pass n − 1 of that round;
-- pass 1 opens round 1, or a later round opened by its restart row (pass 0, with a reason),
-- which needs the round before it. The application refuses the same; this holds whatever writes.
CREATE FUNCTION countersign_tightening_in_order() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
	IF EXISTS (
		SELECT 1 FROM tightening_passes p
		WHERE p.work_order_id = NEW.work_order_id AND p.step_key = NEW.step_key
			AND p.field_key = NEW.field_key AND p.round > NEW.round
	) THEN
		RAISE EXCEPTION 'tightening round % was started again: passes go to the newest round', NEW.round
			USING ERRCODE = 'check_violation';
	END IF;
	IF NEW.pass = 0 THEN
		IF NEW.round < 2 OR NOT EXISTS (
			SELECT 1 FROM tightening_passes p
			WHERE p.work_order_id = NEW.work_order_id AND p.step_key = NEW.step_key
				AND p.field_key = NEW.field_key AND p.round = NEW.round - 1
		) THEN
			RAISE EXCEPTION 'a restart of the tightening passes follows the round before it'
				USING ERRCODE = 'check_violation';
		END IF;
	ELSIF NOT (
		(NEW.pass = 1 AND NEW.round = 1)
		OR EXISTS (
			SELECT 1 FROM tightening_passes p
			WHERE p.work_order_id = NEW.work_order_id AND p.step_key = NEW.step_key
				AND p.field_key = NEW.field_key AND p.round = NEW.round AND p.pass = NEW.pass - 1
		)
	) THEN
		RAISE EXCEPTION 'tightening pass % of round % is out of order', NEW.pass, NEW.round
			USING ERRCODE = 'check_violation';
	END IF;
	RETURN NEW;
END $$;
--> statement-breakpoint
CREATE TRIGGER tightening_passes_in_order BEFORE INSERT ON tightening_passes
	FOR EACH ROW EXECUTE FUNCTION countersign_tightening_in_order();
