CREATE TABLE "calibrations" (
	"id" uuid PRIMARY KEY NOT NULL,
	"instrument_id" uuid NOT NULL,
	"performed_on" date NOT NULL,
	"due_on" date NOT NULL,
	"certificate" text NOT NULL,
	"as_found" text NOT NULL,
	"as_left" text NOT NULL,
	"note" text NOT NULL,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "calibrations_dates" CHECK ("calibrations"."performed_on" <= "calibrations"."due_on"),
	CONSTRAINT "calibrations_as_found" CHECK ("calibrations"."as_found" in ('within', 'out_of_tolerance')),
	CONSTRAINT "calibrations_as_left" CHECK ("calibrations"."as_left" in ('pass', 'fail'))
);
--> statement-breakpoint
CREATE TABLE "equipment" (
	"id" uuid PRIMARY KEY NOT NULL,
	"site_id" uuid NOT NULL,
	"tag" text NOT NULL,
	"created_at" timestamp (3) with time zone NOT NULL,
	CONSTRAINT "equipment_tag_unique" UNIQUE("tag")
);
--> statement-breakpoint
CREATE TABLE "equipment_status_changes" (
	"id" uuid PRIMARY KEY NOT NULL,
	"equipment_id" uuid NOT NULL,
	"status" text NOT NULL,
	"reason" text NOT NULL,
	"source_type" text,
	"source_id" text,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "equipment_status_known" CHECK ("equipment_status_changes"."status" in ('in_service', 'out_of_service', 'awaiting_release', 'quarantined'))
);
--> statement-breakpoint
CREATE TABLE "equipment_usage" (
	"id" uuid PRIMARY KEY NOT NULL,
	"equipment_id" uuid NOT NULL,
	"kind" text NOT NULL,
	"amount" double precision NOT NULL,
	"occurred_at" timestamp (3) with time zone NOT NULL,
	"note" text NOT NULL,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "equipment_usage_kind" CHECK ("equipment_usage"."kind" in ('sip_cycles', 'operating_hours')),
	CONSTRAINT "equipment_usage_amount" CHECK ("equipment_usage"."amount" > 0)
);
--> statement-breakpoint
CREATE TABLE "equipment_versions" (
	"id" uuid PRIMARY KEY NOT NULL,
	"equipment_id" uuid NOT NULL,
	"version" integer NOT NULL,
	"area_id" uuid NOT NULL,
	"equipment_class" text NOT NULL,
	"description" text NOT NULL,
	"gmp_critical" boolean NOT NULL,
	"attributes" jsonb NOT NULL,
	"reason" text,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "equipment_versions_number" UNIQUE("equipment_id","version"),
	CONSTRAINT "equipment_versions_reason" CHECK ("equipment_versions"."version" = 1 or "equipment_versions"."reason" is not null)
);
--> statement-breakpoint
CREATE TABLE "instrument_versions" (
	"id" uuid PRIMARY KEY NOT NULL,
	"instrument_id" uuid NOT NULL,
	"version" integer NOT NULL,
	"kind" text NOT NULL,
	"description" text NOT NULL,
	"range_min" double precision NOT NULL,
	"range_max" double precision NOT NULL,
	"unit" text NOT NULL,
	"uncertainty_u95" double precision NOT NULL,
	"retired" boolean NOT NULL,
	"reason" text,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "instrument_versions_number" UNIQUE("instrument_id","version"),
	CONSTRAINT "instrument_versions_reason" CHECK ("instrument_versions"."version" = 1 or "instrument_versions"."reason" is not null),
	CONSTRAINT "instrument_versions_range" CHECK ("instrument_versions"."range_min" < "instrument_versions"."range_max"),
	CONSTRAINT "instrument_versions_u95" CHECK ("instrument_versions"."uncertainty_u95" > 0)
);
--> statement-breakpoint
CREATE TABLE "instruments" (
	"id" uuid PRIMARY KEY NOT NULL,
	"site_id" uuid NOT NULL,
	"code" text NOT NULL,
	"created_at" timestamp (3) with time zone NOT NULL,
	CONSTRAINT "instruments_code_unique" UNIQUE("code")
);
--> statement-breakpoint
CREATE TABLE "part_lots" (
	"id" uuid PRIMARY KEY NOT NULL,
	"part_id" uuid NOT NULL,
	"supplier_lot" text NOT NULL,
	"received_on" date NOT NULL,
	"expires_on" date,
	"quantity_received" integer NOT NULL,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "part_lots_lot" UNIQUE("part_id","supplier_lot"),
	CONSTRAINT "part_lots_quantity" CHECK ("part_lots"."quantity_received" > 0)
);
--> statement-breakpoint
CREATE TABLE "part_versions" (
	"id" uuid PRIMARY KEY NOT NULL,
	"part_id" uuid NOT NULL,
	"version" integer NOT NULL,
	"description" text NOT NULL,
	"material_code" text NOT NULL,
	"reason" text,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "part_versions_number" UNIQUE("part_id","version"),
	CONSTRAINT "part_versions_reason" CHECK ("part_versions"."version" = 1 or "part_versions"."reason" is not null)
);
--> statement-breakpoint
CREATE TABLE "parts" (
	"id" uuid PRIMARY KEY NOT NULL,
	"site_id" uuid NOT NULL,
	"part_number" text NOT NULL,
	"created_at" timestamp (3) with time zone NOT NULL,
	CONSTRAINT "parts_part_number_unique" UNIQUE("part_number")
);
--> statement-breakpoint
CREATE TABLE "procedure_approvals" (
	"id" uuid PRIMARY KEY NOT NULL,
	"version_id" uuid NOT NULL,
	"revision" integer NOT NULL,
	"signature_id" uuid NOT NULL,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "procedure_approvals_version_id_unique" UNIQUE("version_id"),
	CONSTRAINT "procedure_approvals_signature_id_unique" UNIQUE("signature_id")
);
--> statement-breakpoint
CREATE TABLE "procedure_revisions" (
	"id" uuid PRIMARY KEY NOT NULL,
	"version_id" uuid NOT NULL,
	"revision" integer NOT NULL,
	"content" jsonb NOT NULL,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "procedure_revisions_number" UNIQUE("version_id","revision")
);
--> statement-breakpoint
CREATE TABLE "procedure_versions" (
	"id" uuid PRIMARY KEY NOT NULL,
	"procedure_id" uuid NOT NULL,
	"version" integer NOT NULL,
	"reason" text,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "procedure_versions_number" UNIQUE("procedure_id","version"),
	CONSTRAINT "procedure_versions_reason" CHECK ("procedure_versions"."version" = 1 or "procedure_versions"."reason" is not null)
);
--> statement-breakpoint
CREATE TABLE "procedures" (
	"id" uuid PRIMARY KEY NOT NULL,
	"site_id" uuid NOT NULL,
	"code" text NOT NULL,
	"created_at" timestamp (3) with time zone NOT NULL,
	CONSTRAINT "procedures_code_unique" UNIQUE("code")
);
--> statement-breakpoint
CREATE TABLE "qualifications" (
	"id" uuid PRIMARY KEY NOT NULL,
	"account_id" uuid NOT NULL,
	"procedure_id" uuid NOT NULL,
	"trained_on" date NOT NULL,
	"expires_on" date NOT NULL,
	"trainer" text NOT NULL,
	"note" text NOT NULL,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "qualifications_dates" CHECK ("qualifications"."trained_on" <= "qualifications"."expires_on")
);
--> statement-breakpoint
ALTER TABLE "calibrations" ADD CONSTRAINT "calibrations_instrument_id_instruments_id_fk" FOREIGN KEY ("instrument_id") REFERENCES "public"."instruments"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "calibrations" ADD CONSTRAINT "calibrations_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "equipment" ADD CONSTRAINT "equipment_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "equipment_status_changes" ADD CONSTRAINT "equipment_status_changes_equipment_id_equipment_id_fk" FOREIGN KEY ("equipment_id") REFERENCES "public"."equipment"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "equipment_status_changes" ADD CONSTRAINT "equipment_status_changes_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "equipment_usage" ADD CONSTRAINT "equipment_usage_equipment_id_equipment_id_fk" FOREIGN KEY ("equipment_id") REFERENCES "public"."equipment"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "equipment_usage" ADD CONSTRAINT "equipment_usage_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "equipment_versions" ADD CONSTRAINT "equipment_versions_equipment_id_equipment_id_fk" FOREIGN KEY ("equipment_id") REFERENCES "public"."equipment"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "equipment_versions" ADD CONSTRAINT "equipment_versions_area_id_areas_id_fk" FOREIGN KEY ("area_id") REFERENCES "public"."areas"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "equipment_versions" ADD CONSTRAINT "equipment_versions_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "instrument_versions" ADD CONSTRAINT "instrument_versions_instrument_id_instruments_id_fk" FOREIGN KEY ("instrument_id") REFERENCES "public"."instruments"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "instrument_versions" ADD CONSTRAINT "instrument_versions_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "instruments" ADD CONSTRAINT "instruments_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "part_lots" ADD CONSTRAINT "part_lots_part_id_parts_id_fk" FOREIGN KEY ("part_id") REFERENCES "public"."parts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "part_lots" ADD CONSTRAINT "part_lots_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "part_versions" ADD CONSTRAINT "part_versions_part_id_parts_id_fk" FOREIGN KEY ("part_id") REFERENCES "public"."parts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "part_versions" ADD CONSTRAINT "part_versions_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "parts" ADD CONSTRAINT "parts_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "procedure_approvals" ADD CONSTRAINT "procedure_approvals_version_id_procedure_versions_id_fk" FOREIGN KEY ("version_id") REFERENCES "public"."procedure_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "procedure_approvals" ADD CONSTRAINT "procedure_approvals_signature_id_signatures_id_fk" FOREIGN KEY ("signature_id") REFERENCES "public"."signatures"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "procedure_approvals" ADD CONSTRAINT "procedure_approvals_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "procedure_revisions" ADD CONSTRAINT "procedure_revisions_version_id_procedure_versions_id_fk" FOREIGN KEY ("version_id") REFERENCES "public"."procedure_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "procedure_revisions" ADD CONSTRAINT "procedure_revisions_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "procedure_versions" ADD CONSTRAINT "procedure_versions_procedure_id_procedures_id_fk" FOREIGN KEY ("procedure_id") REFERENCES "public"."procedures"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "procedure_versions" ADD CONSTRAINT "procedure_versions_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "procedures" ADD CONSTRAINT "procedures_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "qualifications" ADD CONSTRAINT "qualifications_account_id_accounts_id_fk" FOREIGN KEY ("account_id") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "qualifications" ADD CONSTRAINT "qualifications_procedure_id_procedures_id_fk" FOREIGN KEY ("procedure_id") REFERENCES "public"."procedures"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "qualifications" ADD CONSTRAINT "qualifications_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "calibrations_instrument" ON "calibrations" USING btree ("instrument_id");--> statement-breakpoint
CREATE INDEX "equipment_status_changes_equipment" ON "equipment_status_changes" USING btree ("equipment_id","audit_seq");--> statement-breakpoint
CREATE INDEX "equipment_usage_equipment" ON "equipment_usage" USING btree ("equipment_id");--> statement-breakpoint
CREATE INDEX "qualifications_person" ON "qualifications" USING btree ("account_id","procedure_id");