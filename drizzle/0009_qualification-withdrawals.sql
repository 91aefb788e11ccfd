CREATE TABLE "qualification_withdrawals" (
	"id" uuid PRIMARY KEY NOT NULL,
	"qualification_id" uuid NOT NULL,
	"effective_on" date NOT NULL,
	"reason" text NOT NULL,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "qualification_withdrawals_qualification_id_unique" UNIQUE("qualification_id")
);
--> statement-breakpoint
ALTER TABLE "qualification_withdrawals" ADD CONSTRAINT "qualification_withdrawals_qualification_id_qualifications_id_fk" FOREIGN KEY ("qualification_id") REFERENCES "public"."qualifications"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "qualification_withdrawals" ADD CONSTRAINT "qualification_withdrawals_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE TRIGGER qualification_withdrawals_append_only BEFORE UPDATE OR DELETE ON qualification_withdrawals
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER qualification_withdrawals_no_truncate BEFORE TRUNCATE ON qualification_withdrawals
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
