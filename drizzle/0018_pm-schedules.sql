CREATE TABLE "pm_schedule_versions" (
	"id" uuid PRIMARY KEY NOT NULL,
	"schedule_id" uuid NOT NULL,
	"version" integer NOT NULL,
	"title" text NOT NULL,
	"equipment_id" uuid,
	"area_id" uuid,
	"equipment_class" text,
	"procedure_id" uuid NOT NULL,
	"interval_every" integer,
	"interval_unit" text,
	"usage_kind" text,
	"usage_limit" double precision,
	"lead_days" integer NOT NULL,
	"grace_days" integer NOT NULL,
	"lead_usage" double precision DEFAULT 0 NOT NULL,
	"grace_usage" double precision DEFAULT 0 NOT NULL,
	"starts_on" date NOT NULL,
	"active" boolean NOT NULL,
	"reason" text,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "pm_schedule_versions_number" UNIQUE("schedule_id","version"),
	CONSTRAINT "pm_schedule_versions_target" CHECK (("pm_schedule_versions"."equipment_id" is not null and "pm_schedule_versions"."area_id" is null and "pm_schedule_versions"."equipment_class" is null)
				or ("pm_schedule_versions"."equipment_id" is null and "pm_schedule_versions"."area_id" is not null and "pm_schedule_versions"."equipment_class" is not null)),
	CONSTRAINT "pm_schedule_versions_interval" CHECK (("pm_schedule_versions"."interval_every" is null) = ("pm_schedule_versions"."interval_unit" is null)
				and ("pm_schedule_versions"."interval_every" is null or "pm_schedule_versions"."interval_every" >= 1)
				and ("pm_schedule_versions"."interval_unit" is null or "pm_schedule_versions"."interval_unit" in ('day', 'week', 'month', 'year'))),
	CONSTRAINT "pm_schedule_versions_usage" CHECK (("pm_schedule_versions"."usage_kind" is null) = ("pm_schedule_versions"."usage_limit" is null)
				and ("pm_schedule_versions"."usage_limit" is null or "pm_schedule_versions"."usage_limit" > 0)
				and ("pm_schedule_versions"."usage_kind" is null or "pm_schedule_versions"."usage_kind" in ('sip_cycles', 'operating_hours'))),
	CONSTRAINT "pm_schedule_versions_some_limit" CHECK ("pm_schedule_versions"."interval_every" is not null or "pm_schedule_versions"."usage_limit" is not null),
	CONSTRAINT "pm_schedule_versions_windows" CHECK ("pm_schedule_versions"."lead_days" >= 0 and "pm_schedule_versions"."grace_days" >= 0 and "pm_schedule_versions"."lead_usage" >= 0 and "pm_schedule_versions"."grace_usage" >= 0),
	CONSTRAINT "pm_schedule_versions_reason" CHECK ("pm_schedule_versions"."version" = 1 or "pm_schedule_versions"."reason" is not null)
);
--> statement-breakpoint
CREATE TABLE "pm_schedules" (
	"id" uuid PRIMARY KEY NOT NULL,
	"site_id" uuid NOT NULL,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL
);
--> statement-breakpoint
ALTER TABLE "work_orders" ADD COLUMN "pm_schedule_id" uuid;--> statement-breakpoint
ALTER TABLE "work_orders" ADD COLUMN "pm_basis" text;--> statement-breakpoint
ALTER TABLE "pm_schedule_versions" ADD CONSTRAINT "pm_schedule_versions_schedule_id_pm_schedules_id_fk" FOREIGN KEY ("schedule_id") REFERENCES "public"."pm_schedules"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "pm_schedule_versions" ADD CONSTRAINT "pm_schedule_versions_equipment_id_equipment_id_fk" FOREIGN KEY ("equipment_id") REFERENCES "public"."equipment"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "pm_schedule_versions" ADD CONSTRAINT "pm_schedule_versions_area_id_areas_id_fk" FOREIGN KEY ("area_id") REFERENCES "public"."areas"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "pm_schedule_versions" ADD CONSTRAINT "pm_schedule_versions_procedure_id_procedures_id_fk" FOREIGN KEY ("procedure_id") REFERENCES "public"."procedures"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "pm_schedule_versions" ADD CONSTRAINT "pm_schedule_versions_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "pm_schedules" ADD CONSTRAINT "pm_schedules_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "pm_schedules" ADD CONSTRAINT "pm_schedules_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "pm_schedule_versions_equipment" ON "pm_schedule_versions" USING btree ("equipment_id");--> statement-breakpoint
ALTER TABLE "work_orders" ADD CONSTRAINT "work_orders_pm_schedule_id_pm_schedules_id_fk" FOREIGN KEY ("pm_schedule_id") REFERENCES "public"."pm_schedules"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "work_orders_pm_once" ON "work_orders" USING btree ("pm_schedule_id","equipment_id","pm_basis") WHERE "work_orders"."pm_schedule_id" is not null;--> statement-breakpoint
ALTER TABLE "work_orders" ADD CONSTRAINT "work_orders_pm_basis" CHECK (("work_orders"."pm_schedule_id" is null) = ("work_orders"."pm_basis" is null));--> statement-breakpoint
-- PM schedules are GMP records: append-only like the others (the trigger function of 0003).
CREATE TRIGGER pm_schedules_append_only BEFORE UPDATE OR DELETE ON pm_schedules
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER pm_schedules_no_truncate BEFORE TRUNCATE ON pm_schedules
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER pm_schedule_versions_append_only BEFORE UPDATE OR DELETE ON pm_schedule_versions
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER pm_schedule_versions_no_truncate BEFORE TRUNCATE ON pm_schedule_versions
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
