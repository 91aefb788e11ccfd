CREATE TABLE "accounts" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"username" text NOT NULL,
	"full_name" text NOT NULL,
	"email" text NOT NULL,
	"roles" text[] DEFAULT '{}'::text[] NOT NULL,
	"password_hash" text NOT NULL,
	"must_change_password" boolean DEFAULT false NOT NULL,
	"active" boolean DEFAULT true NOT NULL,
	"locked_at" timestamp (3) with time zone,
	"failed_sign_ins" integer DEFAULT 0 NOT NULL,
	"password_changed_at" timestamp (3) with time zone DEFAULT now() NOT NULL,
	"last_sign_in_at" timestamp (3) with time zone,
	"deactivated_at" timestamp (3) with time zone,
	"created_at" timestamp (3) with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "accounts_username_unique" UNIQUE("username"),
	CONSTRAINT "accounts_username_form" CHECK ("accounts"."username" ~ '^[a-z0-9][a-z0-9._-]{1,31}$'),
	CONSTRAINT "accounts_roles_known" CHECK ("accounts"."roles" <@ array['technician', 'planner', 'quality', 'inspector', 'administrator']::text[])
);
--> statement-breakpoint
CREATE TABLE "sessions" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"account_id" uuid NOT NULL,
	"created_at" timestamp (3) with time zone DEFAULT now() NOT NULL,
	"last_seen_at" timestamp (3) with time zone DEFAULT now() NOT NULL,
	"ended_at" timestamp (3) with time zone,
	"end_reason" text,
	"client_address" text,
	"user_agent" text
);
--> statement-breakpoint
CREATE TABLE "sign_in_throttle" (
	"key" text PRIMARY KEY NOT NULL,
	"failures" integer NOT NULL,
	"last_failure_at" timestamp (3) with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "audit_event" (
	"seq" bigserial PRIMARY KEY NOT NULL,
	"at" timestamp (3) with time zone DEFAULT now() NOT NULL,
	"actor_kind" text NOT NULL,
	"actor_id" text,
	"actor_name" text NOT NULL,
	"actor_roles" text[] DEFAULT '{}'::text[] NOT NULL,
	"action" text NOT NULL,
	"entity_type" text NOT NULL,
	"entity_id" text,
	"new_values" jsonb,
	"previous_values" jsonb,
	"reason" text,
	"client_address" text,
	CONSTRAINT "audit_event_action_form" CHECK ("audit_event"."action" ~ '^[a-z][a-z_]*(\.[a-z][a-z_]*)+$'),
	CONSTRAINT "audit_event_actor_kind" CHECK ("audit_event"."actor_kind" in ('person', 'system', 'anonymous'))
);
--> statement-breakpoint
ALTER TABLE "sessions" ADD CONSTRAINT "sessions_account_id_accounts_id_fk" FOREIGN KEY ("account_id") REFERENCES "public"."accounts"("id") ON DELETE no action ON UPDATE no action;