-- The audit-trail browser's filters (8/10): each one walks an index in seq order, so that a page
-- of 50 stays fast on a long trail (bench/audit-browse prints the figures). Free text uses a
-- trigram index (pg_trgm, a trusted extension the database owner may install) over the same
-- expression the query searches.
CREATE INDEX audit_event_entity_id ON audit_event (entity_id text_pattern_ops, seq);
--> statement-breakpoint
CREATE INDEX audit_event_actor ON audit_event (actor_id, seq);
--> statement-breakpoint
CREATE INDEX audit_event_action ON audit_event (action text_pattern_ops, seq);
--> statement-breakpoint
CREATE INDEX audit_event_at ON audit_event (at);
--> statement-breakpoint
CREATE EXTENSION IF NOT EXISTS pg_trgm;
--> statement-breakpoint
CREATE INDEX audit_event_text ON audit_event USING gin (
	(coalesce(reason, '') || ' ' || coalesce(new_values::text, '') || ' ' || coalesce(previous_values::text, '') || ' ' || actor_name) gin_trgm_ops
);
