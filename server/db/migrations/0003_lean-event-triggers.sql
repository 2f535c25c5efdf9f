-- The event triggers of 0002, doing the same with less work per stored event:
-- the per-row functions run only for fault events (the only rows they act on),
-- and the notification goes once per insert statement instead of once per row.
DROP TRIGGER attempt_events_source ON attempt_events;
--> statement-breakpoint
CREATE TRIGGER attempt_events_source BEFORE INSERT ON attempt_events FOR EACH ROW
  WHEN (NEW.kind IN ('fault-inject', 'fault-clear')) EXECUTE FUNCTION loadline_event_source();
--> statement-breakpoint
DROP TRIGGER attempt_events_stored ON attempt_events;
--> statement-breakpoint
DROP FUNCTION loadline_event_stored();
--> statement-breakpoint
CREATE OR REPLACE FUNCTION loadline_event_applied() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  UPDATE pending_injections p SET applied_at = now()
  WHERE p.attempt_id = NEW.attempt_id
    AND p.applied_at IS NULL
    AND p.action->>'type' = CASE NEW.kind WHEN 'fault-inject' THEN 'inject' ELSE 'clear' END
    AND p.action->>'faultId' = loadline_event_fault_id(NEW.kind, NEW.payload);
  RETURN NULL;
END
$$;
--> statement-breakpoint
CREATE TRIGGER attempt_events_applied AFTER INSERT ON attempt_events FOR EACH ROW
  WHEN (NEW.kind IN ('fault-inject', 'fault-clear')) EXECUTE FUNCTION loadline_event_applied();
--> statement-breakpoint
CREATE OR REPLACE FUNCTION loadline_events_stored() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  PERFORM pg_notify('loadline_attempt', d.attempt_id::text) FROM (SELECT DISTINCT attempt_id FROM stored_rows) d;
  RETURN NULL;
END
$$;
--> statement-breakpoint
CREATE TRIGGER attempt_events_stored AFTER INSERT ON attempt_events REFERENCING NEW TABLE AS stored_rows
  FOR EACH STATEMENT EXECUTE FUNCTION loadline_events_stored();
