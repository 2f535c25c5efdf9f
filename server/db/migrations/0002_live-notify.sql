-- Live fan-out: the database announces what changed, on two channels, with ids only.
--   loadline_attempt    payload "<attempt id>": events stored, attempt started or changed status
--   loadline_injection  payload "<attempt id>:<injection id>": an injection made or applied
-- An injected fault reaches the event log as an ordinary fault-inject / fault-clear
-- event whose fault id is the one in the injection's action; storing it marks the
-- injection applied and the event's source 'instructor'.
CREATE OR REPLACE FUNCTION loadline_event_fault_id(kind text, payload jsonb) RETURNS text
LANGUAGE sql IMMUTABLE AS $$
  SELECT CASE kind
    WHEN 'fault-inject' THEN coalesce(payload->'fault'->>'id', payload->'event'->'fault'->>'id')
    WHEN 'fault-clear' THEN coalesce(payload->>'faultId', payload->'event'->>'faultId')
  END
$$;
--> statement-breakpoint
CREATE OR REPLACE FUNCTION loadline_event_source() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  IF NEW.kind IN ('fault-inject', 'fault-clear') AND EXISTS (
    SELECT 1 FROM pending_injections p
    WHERE p.attempt_id = NEW.attempt_id
      AND p.action->>'type' = CASE NEW.kind WHEN 'fault-inject' THEN 'inject' ELSE 'clear' END
      AND p.action->>'faultId' = loadline_event_fault_id(NEW.kind, NEW.payload)
  ) THEN
    NEW.source := 'instructor';
  END IF;
  RETURN NEW;
END
$$;
--> statement-breakpoint
CREATE OR REPLACE FUNCTION loadline_event_stored() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  IF NEW.kind IN ('fault-inject', 'fault-clear') THEN
    UPDATE pending_injections p SET applied_at = now()
    WHERE p.attempt_id = NEW.attempt_id
      AND p.applied_at IS NULL
      AND p.action->>'type' = CASE NEW.kind WHEN 'fault-inject' THEN 'inject' ELSE 'clear' END
      AND p.action->>'faultId' = loadline_event_fault_id(NEW.kind, NEW.payload);
  END IF;
  -- Identical notifications within one transaction are delivered once, so a batch announces itself once.
  PERFORM pg_notify('loadline_attempt', NEW.attempt_id::text);
  RETURN NULL;
END
$$;
--> statement-breakpoint
CREATE OR REPLACE FUNCTION loadline_attempt_changed() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  PERFORM pg_notify('loadline_attempt', NEW.id::text);
  RETURN NULL;
END
$$;
--> statement-breakpoint
CREATE OR REPLACE FUNCTION loadline_injection_changed() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  PERFORM pg_notify('loadline_injection', NEW.attempt_id::text || ':' || NEW.id::text);
  RETURN NULL;
END
$$;
--> statement-breakpoint
CREATE TRIGGER attempt_events_source BEFORE INSERT ON attempt_events FOR EACH ROW EXECUTE FUNCTION loadline_event_source();
--> statement-breakpoint
CREATE TRIGGER attempt_events_stored AFTER INSERT ON attempt_events FOR EACH ROW EXECUTE FUNCTION loadline_event_stored();
--> statement-breakpoint
CREATE TRIGGER attempts_started AFTER INSERT ON attempts FOR EACH ROW EXECUTE FUNCTION loadline_attempt_changed();
--> statement-breakpoint
CREATE TRIGGER attempts_status AFTER UPDATE OF status ON attempts FOR EACH ROW WHEN (OLD.status IS DISTINCT FROM NEW.status) EXECUTE FUNCTION loadline_attempt_changed();
--> statement-breakpoint
CREATE TRIGGER pending_injections_changed AFTER INSERT OR UPDATE ON pending_injections FOR EACH ROW EXECUTE FUNCTION loadline_injection_changed();
