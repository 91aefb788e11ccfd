CREATE TABLE "deviation_dispositions" (
	"id" uuid PRIMARY KEY NOT NULL,
	"deviation_id" uuid NOT NULL,
	"decision" text NOT NULL,
	"text" text NOT NULL,
	"signature_id" uuid NOT NULL,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "deviation_dispositions_deviation_id_unique" UNIQUE("deviation_id"),
	CONSTRAINT "deviation_dispositions_signature_id_unique" UNIQUE("signature_id"),
	CONSTRAINT "deviation_dispositions_decision" CHECK ("deviation_dispositions"."decision" in ('accepted', 'corrected', 'capa'))
);
--> statement-breakpoint
CREATE TABLE "deviations" (
	"id" uuid PRIMARY KEY NOT NULL,
	"number" text NOT NULL,
	"work_order_id" uuid NOT NULL,
	"step_key" text NOT NULL,
	"field_key" text NOT NULL,
	"entry_id" uuid NOT NULL,
	"description" text NOT NULL,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "deviations_number_unique" UNIQUE("number"),
	CONSTRAINT "deviations_entry_id_unique" UNIQUE("entry_id")
);
--> statement-breakpoint
CREATE TABLE "step_entries" (
	"id" uuid PRIMARY KEY NOT NULL,
	"work_order_id" uuid NOT NULL,
	"step_key" text NOT NULL,
	"field_key" text NOT NULL,
	"value" jsonb NOT NULL,
	"within_limits" boolean,
	"lot_id" uuid,
	"instrument_id" uuid,
	"calibration_due_on" date,
	"performed_at" timestamp (3) with time zone NOT NULL,
	"late_reason" text,
	"corrects" uuid,
	"reason" text,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "step_entries_corrects_unique" UNIQUE("corrects"),
	CONSTRAINT "step_entries_correction_reason" CHECK ("step_entries"."corrects" is null or "step_entries"."reason" is not null)
);
--> statement-breakpoint
CREATE TABLE "step_signoffs" (
	"id" uuid PRIMARY KEY NOT NULL,
	"work_order_id" uuid NOT NULL,
	"step_key" text NOT NULL,
	"kind" text NOT NULL,
	"signature_id" uuid,
	"reason" text,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "step_signoffs_signature_id_unique" UNIQUE("signature_id"),
	CONSTRAINT "step_signoffs_kind" CHECK ("step_signoffs"."kind" in ('performed', 'verified', 'returned')),
	CONSTRAINT "step_signoffs_complete" CHECK (("step_signoffs"."kind" = 'returned' and "step_signoffs"."reason" is not null) or ("step_signoffs"."kind" <> 'returned' and "step_signoffs"."signature_id" is not null))
);
--> statement-breakpoint
CREATE TABLE "work_order_plans" (
	"id" uuid PRIMARY KEY NOT NULL,
	"work_order_id" uuid NOT NULL,
	"version" integer NOT NULL,
	"due_on" date NOT NULL,
	"priority" text NOT NULL,
	"assignees" uuid[] NOT NULL,
	"notes" text NOT NULL,
	"reason" text,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "work_order_plans_number" UNIQUE("work_order_id","version"),
	CONSTRAINT "work_order_plans_reason" CHECK ("work_order_plans"."version" = 1 or "work_order_plans"."reason" is not null),
	CONSTRAINT "work_order_plans_priority" CHECK ("work_order_plans"."priority" in ('routine', 'high', 'urgent'))
);
--> statement-breakpoint
CREATE TABLE "work_order_transitions" (
	"id" uuid PRIMARY KEY NOT NULL,
	"work_order_id" uuid NOT NULL,
	"kind" text NOT NULL,
	"reason" text,
	"signature_id" uuid,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "work_order_transitions_signature_id_unique" UNIQUE("signature_id"),
	CONSTRAINT "work_order_transitions_kind" CHECK ("work_order_transitions"."kind" in ('planned', 'started', 'executed', 'trail_reviewed', 'released', 'returned', 'cancelled')),
	CONSTRAINT "work_order_transitions_reason" CHECK ("work_order_transitions"."kind" not in ('returned', 'cancelled') or "work_order_transitions"."reason" is not null),
	CONSTRAINT "work_order_transitions_signed" CHECK ("work_order_transitions"."kind" not in ('executed', 'trail_reviewed', 'released', 'returned') or "work_order_transitions"."signature_id" is not null)
);
--> statement-breakpoint
CREATE TABLE "work_orders" (
	"id" uuid PRIMARY KEY NOT NULL,
	"site_id" uuid NOT NULL,
	"number" text NOT NULL,
	"kind" text NOT NULL,
	"equipment_id" uuid NOT NULL,
	"procedure_version_id" uuid NOT NULL,
	"follows_up" uuid,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "work_orders_number_unique" UNIQUE("number"),
	CONSTRAINT "work_orders_kind" CHECK ("work_orders"."kind" in ('preventive', 'corrective', 'follow_up'))
);
--> statement-breakpoint
ALTER TABLE "deviation_dispositions" ADD CONSTRAINT "deviation_dispositions_deviation_id_deviations_id_fk" FOREIGN KEY ("deviation_id") REFERENCES "public"."deviations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "deviation_dispositions" ADD CONSTRAINT "deviation_dispositions_signature_id_signatures_id_fk" FOREIGN KEY ("signature_id") REFERENCES "public"."signatures"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "deviation_dispositions" ADD CONSTRAINT "deviation_dispositions_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "deviations" ADD CONSTRAINT "deviations_work_order_id_work_orders_id_fk" FOREIGN KEY ("work_order_id") REFERENCES "public"."work_orders"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "deviations" ADD CONSTRAINT "deviations_entry_id_step_entries_id_fk" FOREIGN KEY ("entry_id") REFERENCES "public"."step_entries"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "deviations" ADD CONSTRAINT "deviations_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "step_entries" ADD CONSTRAINT "step_entries_work_order_id_work_orders_id_fk" FOREIGN KEY ("work_order_id") REFERENCES "public"."work_orders"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "step_entries" ADD CONSTRAINT "step_entries_lot_id_part_lots_id_fk" FOREIGN KEY ("lot_id") REFERENCES "public"."part_lots"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "step_entries" ADD CONSTRAINT "step_entries_instrument_id_instruments_id_fk" FOREIGN KEY ("instrument_id") REFERENCES "public"."instruments"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "step_entries" ADD CONSTRAINT "step_entries_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "step_signoffs" ADD CONSTRAINT "step_signoffs_work_order_id_work_orders_id_fk" FOREIGN KEY ("work_order_id") REFERENCES "public"."work_orders"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "step_signoffs" ADD CONSTRAINT "step_signoffs_signature_id_signatures_id_fk" FOREIGN KEY ("signature_id") REFERENCES "public"."signatures"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "step_signoffs" ADD CONSTRAINT "step_signoffs_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "work_order_plans" ADD CONSTRAINT "work_order_plans_work_order_id_work_orders_id_fk" FOREIGN KEY ("work_order_id") REFERENCES "public"."work_orders"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "work_order_plans" ADD CONSTRAINT "work_order_plans_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "work_order_transitions" ADD CONSTRAINT "work_order_transitions_work_order_id_work_orders_id_fk" FOREIGN KEY ("work_order_id") REFERENCES "public"."work_orders"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "work_order_transitions" ADD CONSTRAINT "work_order_transitions_signature_id_signatures_id_fk" FOREIGN KEY ("signature_id") REFERENCES "public"."signatures"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "work_order_transitions" ADD CONSTRAINT "work_order_transitions_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "work_orders" ADD CONSTRAINT "work_orders_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "work_orders" ADD CONSTRAINT "work_orders_equipment_id_equipment_id_fk" FOREIGN KEY ("equipment_id") REFERENCES "public"."equipment"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "work_orders" ADD CONSTRAINT "work_orders_procedure_version_id_procedure_versions_id_fk" FOREIGN KEY ("procedure_version_id") REFERENCES "public"."procedure_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "work_orders" ADD CONSTRAINT "work_orders_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "deviations_work_order" ON "deviations" USING btree ("work_order_id");--> statement-breakpoint
CREATE INDEX "step_entries_order" ON "step_entries" USING btree ("work_order_id","audit_seq");--> statement-breakpoint
CREATE INDEX "step_entries_lot" ON "step_entries" USING btree ("lot_id");--> statement-breakpoint
CREATE INDEX "step_entries_instrument" ON "step_entries" USING btree ("instrument_id");--> statement-breakpoint
CREATE INDEX "step_signoffs_order" ON "step_signoffs" USING btree ("work_order_id","audit_seq");--> statement-breakpoint
CREATE INDEX "work_order_transitions_order" ON "work_order_transitions" USING btree ("work_order_id","audit_seq");--> statement-breakpoint
CREATE INDEX "work_orders_equipment" ON "work_orders" USING btree ("equipment_id");