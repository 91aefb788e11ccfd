CREATE TABLE "part_life_records" (
	"id" uuid PRIMARY KEY NOT NULL,
	"equipment_id" uuid NOT NULL,
	"material_code" text NOT NULL,
	"fitted_on" date NOT NULL,
	"removed_on" date NOT NULL,
	"sip_cycles" integer NOT NULL,
	"ended_by" text NOT NULL,
	"source" text NOT NULL,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "part_life_records_ended_by" CHECK ("part_life_records"."ended_by" in ('failure', 'planned')),
	CONSTRAINT "part_life_records_dates" CHECK ("part_life_records"."removed_on" >= "part_life_records"."fitted_on"),
	CONSTRAINT "part_life_records_cycles" CHECK ("part_life_records"."sip_cycles" >= 0)
);
--> statement-breakpoint
CREATE TABLE "pm_digests" (
	"id" uuid PRIMARY KEY NOT NULL,
	"site_id" uuid NOT NULL,
	"day" date NOT NULL,
	"overdue" integer NOT NULL,
	"due_soon" integer NOT NULL,
	"recipients" integer NOT NULL,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "pm_digests_once" UNIQUE("site_id","day")
);
--> statement-breakpoint
CREATE TABLE "sip_deviation_dispositions" (
	"id" uuid PRIMARY KEY NOT NULL,
	"deviation_id" uuid NOT NULL,
	"decision" text NOT NULL,
	"text" text NOT NULL,
	"signature_id" uuid NOT NULL,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "sip_deviation_dispositions_deviation_id_unique" UNIQUE("deviation_id"),
	CONSTRAINT "sip_deviation_dispositions_signature_id_unique" UNIQUE("signature_id"),
	CONSTRAINT "sip_deviation_dispositions_decision" CHECK ("sip_deviation_dispositions"."decision" in ('accepted', 'corrected', 'capa'))
);
--> statement-breakpoint
CREATE TABLE "sip_deviations" (
	"id" uuid PRIMARY KEY NOT NULL,
	"number" text NOT NULL,
	"sip_cycle_id" uuid NOT NULL,
	"description" text NOT NULL,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "sip_deviations_number_unique" UNIQUE("number"),
	CONSTRAINT "sip_deviations_sip_cycle_id_unique" UNIQUE("sip_cycle_id")
);
--> statement-breakpoint
ALTER TABLE "api_tokens" DROP CONSTRAINT "api_tokens_scope";--> statement-breakpoint
ALTER TABLE "part_life_records" ADD CONSTRAINT "part_life_records_equipment_id_equipment_id_fk" FOREIGN KEY ("equipment_id") REFERENCES "public"."equipment"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "part_life_records" ADD CONSTRAINT "part_life_records_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "pm_digests" ADD CONSTRAINT "pm_digests_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "pm_digests" ADD CONSTRAINT "pm_digests_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sip_deviation_dispositions" ADD CONSTRAINT "sip_deviation_dispositions_deviation_id_sip_deviations_id_fk" FOREIGN KEY ("deviation_id") REFERENCES "public"."sip_deviations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sip_deviation_dispositions" ADD CONSTRAINT "sip_deviation_dispositions_signature_id_signatures_id_fk" FOREIGN KEY ("signature_id") REFERENCES "public"."signatures"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sip_deviation_dispositions" ADD CONSTRAINT "sip_deviation_dispositions_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sip_deviations" ADD CONSTRAINT "sip_deviations_sip_cycle_id_sip_cycles_id_fk" FOREIGN KEY ("sip_cycle_id") REFERENCES "public"."sip_cycles"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sip_deviations" ADD CONSTRAINT "sip_deviations_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "part_life_records_equipment" ON "part_life_records" USING btree ("equipment_id");--> statement-breakpoint
CREATE UNIQUE INDEX "work_orders_follow_up_once" ON "work_orders" USING btree ("follows_up") WHERE "work_orders"."kind" = 'follow_up';--> statement-breakpoint
ALTER TABLE "api_tokens" ADD CONSTRAINT "api_tokens_scope" CHECK ("api_tokens"."scope" in ('usage', 'usage:read'));--> statement-breakpoint
-- Digests, carried-over lives, cycle deviations and their dispositions are records: append-only (the function of 0003).
CREATE TRIGGER pm_digests_append_only BEFORE UPDATE OR DELETE ON pm_digests
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER pm_digests_no_truncate BEFORE TRUNCATE ON pm_digests
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER part_life_records_append_only BEFORE UPDATE OR DELETE ON part_life_records
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER part_life_records_no_truncate BEFORE TRUNCATE ON part_life_records
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER sip_deviations_append_only BEFORE UPDATE OR DELETE ON sip_deviations
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER sip_deviations_no_truncate BEFORE TRUNCATE ON sip_deviations
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER sip_deviation_dispositions_append_only BEFORE UPDATE OR DELETE ON sip_deviation_dispositions
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER sip_deviation_dispositions_no_truncate BEFORE TRUNCATE ON sip_deviation_dispositions
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
