CREATE TABLE "api_token_revocations" (
	"token_id" uuid PRIMARY KEY NOT NULL,
	"reason" text NOT NULL,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL
);
--> statement-breakpoint
CREATE TABLE "api_tokens" (
	"id" uuid PRIMARY KEY NOT NULL,
	"name" text NOT NULL,
	"scope" text NOT NULL,
	"token_hash" "bytea" NOT NULL,
	"prefix" text NOT NULL,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "api_tokens_token_hash_unique" UNIQUE("token_hash"),
	CONSTRAINT "api_tokens_scope" CHECK ("api_tokens"."scope" in ('usage'))
);
--> statement-breakpoint
CREATE TABLE "sip_cycles" (
	"id" uuid PRIMARY KEY NOT NULL,
	"equipment_id" uuid NOT NULL,
	"started_at" timestamp (3) with time zone NOT NULL,
	"ended_at" timestamp (3) with time zone NOT NULL,
	"count" integer NOT NULL,
	"peak_temperature_c" double precision NOT NULL,
	"absolute_pressure_bar" double precision NOT NULL,
	"hold_minutes" double precision NOT NULL,
	"saturation_temperature_c" double precision NOT NULL,
	"steam_matches" boolean NOT NULL,
	"tolerance_c" double precision NOT NULL,
	"token_id" uuid,
	"recorded_by" uuid,
	"recorded_by_name" text NOT NULL,
	"recorded_at" timestamp (3) with time zone NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "sip_cycles_once" UNIQUE("equipment_id","started_at"),
	CONSTRAINT "sip_cycles_times" CHECK ("sip_cycles"."ended_at" > "sip_cycles"."started_at"),
	CONSTRAINT "sip_cycles_count" CHECK ("sip_cycles"."count" >= 1)
);
--> statement-breakpoint
ALTER TABLE "audit_event" DROP CONSTRAINT "audit_event_actor_kind";--> statement-breakpoint
ALTER TABLE "api_token_revocations" ADD CONSTRAINT "api_token_revocations_token_id_api_tokens_id_fk" FOREIGN KEY ("token_id") REFERENCES "public"."api_tokens"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "api_token_revocations" ADD CONSTRAINT "api_token_revocations_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "api_tokens" ADD CONSTRAINT "api_tokens_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sip_cycles" ADD CONSTRAINT "sip_cycles_equipment_id_equipment_id_fk" FOREIGN KEY ("equipment_id") REFERENCES "public"."equipment"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sip_cycles" ADD CONSTRAINT "sip_cycles_token_id_api_tokens_id_fk" FOREIGN KEY ("token_id") REFERENCES "public"."api_tokens"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sip_cycles" ADD CONSTRAINT "sip_cycles_recorded_by_accounts_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "sip_cycles_equipment" ON "sip_cycles" USING btree ("equipment_id","started_at");--> statement-breakpoint
ALTER TABLE "audit_event" ADD CONSTRAINT "audit_event_actor_kind" CHECK ("audit_event"."actor_kind" in ('person', 'system', 'anonymous', 'token'));--> statement-breakpoint
-- Tokens, their revocations and the reported cycles are records: append-only (the function of 0003).
CREATE TRIGGER api_tokens_append_only BEFORE UPDATE OR DELETE ON api_tokens
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER api_tokens_no_truncate BEFORE TRUNCATE ON api_tokens
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER api_token_revocations_append_only BEFORE UPDATE OR DELETE ON api_token_revocations
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER api_token_revocations_no_truncate BEFORE TRUNCATE ON api_token_revocations
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER sip_cycles_append_only BEFORE UPDATE OR DELETE ON sip_cycles
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER sip_cycles_no_truncate BEFORE TRUNCATE ON sip_cycles
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
