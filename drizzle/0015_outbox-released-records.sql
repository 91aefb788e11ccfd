CREATE TABLE "record_prints" (
	"id" uuid PRIMARY KEY NOT NULL,
	"work_order_id" uuid NOT NULL,
	"record_hash" text NOT NULL,
	"chain_seq" bigint NOT NULL,
	"chain_hash" text NOT NULL,
	"kind" text NOT NULL,
	"printed_by" uuid,
	"printed_by_name" text NOT NULL,
	"printed_at" timestamp (3) with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "record_prints_kind" CHECK ("record_prints"."kind" in ('working', 'released', 'copy'))
);
--> statement-breakpoint
CREATE TABLE "released_records" (
	"id" uuid PRIMARY KEY NOT NULL,
	"work_order_id" uuid NOT NULL,
	"sha256" text NOT NULL,
	"size" integer NOT NULL,
	"record_hash" text NOT NULL,
	"chain_seq" bigint NOT NULL,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "released_records_work_order_id_unique" UNIQUE("work_order_id"),
	CONSTRAINT "released_records_hashes" CHECK ("released_records"."sha256" ~ '^[0-9a-f]{64}$' and "released_records"."record_hash" ~ '^[0-9a-f]{64}$'),
	CONSTRAINT "released_records_size" CHECK ("released_records"."size" > 0)
);
--> statement-breakpoint
CREATE TABLE "outbox" (
	"id" uuid PRIMARY KEY NOT NULL,
	"kind" text NOT NULL,
	"payload" jsonb NOT NULL,
	"cause_seq" bigint,
	"created_at" timestamp (3) with time zone DEFAULT now() NOT NULL,
	"attempts" integer DEFAULT 0 NOT NULL,
	"next_attempt_at" timestamp (3) with time zone DEFAULT now() NOT NULL,
	"last_error" text,
	"done_at" timestamp (3) with time zone,
	CONSTRAINT "outbox_kind" CHECK ("outbox"."kind" in ('mail', 'released_record'))
);
--> statement-breakpoint
ALTER TABLE "record_prints" ADD CONSTRAINT "record_prints_work_order_id_work_orders_id_fk" FOREIGN KEY ("work_order_id") REFERENCES "public"."work_orders"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "record_prints" ADD CONSTRAINT "record_prints_printed_by_accounts_id_fk" FOREIGN KEY ("printed_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "released_records" ADD CONSTRAINT "released_records_work_order_id_work_orders_id_fk" FOREIGN KEY ("work_order_id") REFERENCES "public"."work_orders"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "released_records" ADD CONSTRAINT "released_records_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "record_prints_hash" ON "record_prints" USING btree ("record_hash");--> statement-breakpoint
CREATE INDEX "outbox_due" ON "outbox" USING btree ("next_attempt_at") WHERE "outbox"."done_at" is null;--> statement-breakpoint
-- The released record and the prints are append-only like every GMP record (the trigger of 0003).
CREATE TRIGGER released_records_append_only BEFORE UPDATE OR DELETE ON released_records
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER released_records_no_truncate BEFORE TRUNCATE ON released_records
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER record_prints_append_only BEFORE UPDATE OR DELETE ON record_prints
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER record_prints_no_truncate BEFORE TRUNCATE ON record_prints
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
-- The outbox: the app may count attempts and mark a row done, nothing else; a done row stays as it
-- is, and no row is deleted.
GRANT UPDATE (attempts, next_attempt_at, last_error, done_at) ON outbox TO countersign_app;
--> statement-breakpoint
CREATE FUNCTION countersign_outbox_delivery() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	IF TG_OP <> 'UPDATE' THEN
		RAISE EXCEPTION 'outbox rows are never deleted' USING ERRCODE = 'P0001';
	END IF;
	IF OLD.done_at IS NOT NULL THEN
		RAISE EXCEPTION 'outbox row % is done and stays as it is', OLD.id USING ERRCODE = 'P0001';
	END IF;
	IF NEW.kind IS DISTINCT FROM OLD.kind OR NEW.payload IS DISTINCT FROM OLD.payload
		OR NEW.cause_seq IS DISTINCT FROM OLD.cause_seq OR NEW.created_at IS DISTINCT FROM OLD.created_at THEN
		RAISE EXCEPTION 'only the delivery of an outbox row changes' USING ERRCODE = 'P0001';
	END IF;
	RETURN NEW;
END $$;
--> statement-breakpoint
CREATE TRIGGER outbox_delivery BEFORE UPDATE OR DELETE ON outbox
	FOR EACH ROW EXECUTE FUNCTION countersign_outbox_delivery();
--> statement-breakpoint
CREATE TRIGGER outbox_no_truncate BEFORE TRUNCATE ON outbox
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
