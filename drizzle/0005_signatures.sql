CREATE TABLE "signatures" (
	"id" uuid PRIMARY KEY NOT NULL,
	"record_type" text NOT NULL,
	"record_id" text NOT NULL,
	"meaning" text NOT NULL,
	"signer_id" uuid NOT NULL,
	"signer_name" text NOT NULL,
	"signer_roles" text[] NOT NULL,
	"signed_at" timestamp (3) with time zone NOT NULL,
	"content_hash" "bytea" NOT NULL,
	"audit_seq" bigint NOT NULL,
	CONSTRAINT "signatures_audit_seq_unique" UNIQUE("audit_seq"),
	CONSTRAINT "signatures_meaning_known" CHECK ("signatures"."meaning" in ('performed', 'verified', 'executed', 'approved', 'reviewed', 'released', 'returned')),
	CONSTRAINT "signatures_hash_length" CHECK (octet_length("signatures"."content_hash") = 32)
);
--> statement-breakpoint
ALTER TABLE "signatures" ADD CONSTRAINT "signatures_signer_id_accounts_id_fk" FOREIGN KEY ("signer_id") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "signatures_record" ON "signatures" USING btree ("record_type","record_id");--> statement-breakpoint
-- Signatures are GMP records: append-only for every role, the owner included.
CREATE TRIGGER signatures_append_only BEFORE UPDATE OR DELETE ON signatures
	FOR EACH ROW EXECUTE FUNCTION countersign_append_only();
--> statement-breakpoint
CREATE TRIGGER signatures_no_truncate BEFORE TRUNCATE ON signatures
	FOR EACH STATEMENT EXECUTE FUNCTION countersign_append_only();
