CREATE TABLE "audit_checkpoints" (
	"tree_size" bigint PRIMARY KEY NOT NULL,
	"root_hash" "bytea" NOT NULL,
	"reason" text NOT NULL,
	"created_at" timestamp (3) with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "audit_checkpoints_size" CHECK ("audit_checkpoints"."tree_size" > 0),
	CONSTRAINT "audit_checkpoints_reason" CHECK ("audit_checkpoints"."reason" in ('interval', 'release')),
	CONSTRAINT "audit_checkpoints_root" CHECK (octet_length("audit_checkpoints"."root_hash") = 32)
);
--> statement-breakpoint
ALTER TABLE "released_records" ADD COLUMN "checkpoint_size" bigint;--> statement-breakpoint
-- Checkpoints are append-only like the trail itself (the trigger of 0003).
CREATE TRIGGER audit_checkpoints_append_only BEFORE UPDATE OR DELETE ON audit_checkpoints
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER audit_checkpoints_no_truncate BEFORE TRUNCATE ON audit_checkpoints
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
