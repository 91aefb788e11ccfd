CREATE TABLE "evidence" (
	"id" uuid PRIMARY KEY NOT NULL,
	"work_order_id" uuid NOT NULL,
	"step_key" text,
	"field_key" text,
	"deviation_id" uuid,
	"sha256" text NOT NULL,
	"size" integer NOT NULL,
	"media_type" text NOT NULL,
	"width" integer NOT NULL,
	"height" integer NOT NULL,
	"thumb_sha256" text NOT NULL,
	"note" text,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "evidence_sha256" CHECK ("evidence"."sha256" ~ '^[0-9a-f]{64}$' and "evidence"."thumb_sha256" ~ '^[0-9a-f]{64}$'),
	CONSTRAINT "evidence_size" CHECK ("evidence"."size" > 0 and "evidence"."width" > 0 and "evidence"."height" > 0),
	CONSTRAINT "evidence_type" CHECK ("evidence"."media_type" in ('image/jpeg', 'image/png', 'image/webp')),
	CONSTRAINT "evidence_place" CHECK ("evidence"."step_key" is not null or "evidence"."deviation_id" is not null)
);
--> statement-breakpoint
CREATE TABLE "evidence_voids" (
	"id" uuid PRIMARY KEY NOT NULL,
	"evidence_id" uuid NOT NULL,
	"reason" text NOT NULL,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "evidence_voids_evidence_id_unique" UNIQUE("evidence_id")
);
--> statement-breakpoint
ALTER TABLE "evidence" ADD CONSTRAINT "evidence_work_order_id_work_orders_id_fk" FOREIGN KEY ("work_order_id") REFERENCES "public"."work_orders"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "evidence" ADD CONSTRAINT "evidence_deviation_id_deviations_id_fk" FOREIGN KEY ("deviation_id") REFERENCES "public"."deviations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "evidence" ADD CONSTRAINT "evidence_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "evidence_voids" ADD CONSTRAINT "evidence_voids_evidence_id_evidence_id_fk" FOREIGN KEY ("evidence_id") REFERENCES "public"."evidence"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "evidence_voids" ADD CONSTRAINT "evidence_voids_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "evidence_work_order" ON "evidence" USING btree ("work_order_id","audit_seq");--> statement-breakpoint
-- Evidence is append-only like every GMP record (the trigger of 0003).
CREATE TRIGGER evidence_append_only BEFORE UPDATE OR DELETE ON evidence
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER evidence_no_truncate BEFORE TRUNCATE ON evidence
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER evidence_voids_append_only BEFORE UPDATE OR DELETE ON evidence_voids
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER evidence_voids_no_truncate BEFORE TRUNCATE ON evidence_voids
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
