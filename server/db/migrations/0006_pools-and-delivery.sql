-- Fault pools (an assignment draws each student's scenario version from
-- assignment_pool by a seeded draw), practice of an open assignment's versions
-- only when its instructor allows it, and the server's record of when an
-- injection reached the bench (delivered_at, and the sim time of the log then).
-- A bench logs an injection as a change-apply / change-clear event whose change
-- id is the injection's fault id: those mark the injection applied and the event's
-- source 'instructor', as fault-inject / fault-clear events did.
CREATE TABLE "assignment_pool" (
	"assignment_id" integer NOT NULL,
	"scenario_version_id" integer NOT NULL,
	"position" integer NOT NULL,
	CONSTRAINT "assignment_pool_assignment_id_scenario_version_id_pk" PRIMARY KEY("assignment_id","scenario_version_id")
);
--> statement-breakpoint
ALTER TABLE "assignments" ADD COLUMN "allow_practice" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "assignments" ADD COLUMN "pool_seed" integer DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE "pending_injections" ADD COLUMN "delivered_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "pending_injections" ADD COLUMN "delivered_sim_ms" integer;--> statement-breakpoint
ALTER TABLE "assignment_pool" ADD CONSTRAINT "assignment_pool_assignment_id_assignments_id_fk" FOREIGN KEY ("assignment_id") REFERENCES "public"."assignments"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "assignment_pool" ADD CONSTRAINT "assignment_pool_scenario_version_id_scenario_versions_id_fk" FOREIGN KEY ("scenario_version_id") REFERENCES "public"."scenario_versions"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
CREATE OR REPLACE FUNCTION loadline_event_fault_id(kind text, payload jsonb) RETURNS text
LANGUAGE sql IMMUTABLE AS $$
  SELECT CASE kind
    WHEN 'fault-inject' THEN coalesce(payload->'fault'->>'id', payload->'event'->'fault'->>'id')
    WHEN 'fault-clear' THEN coalesce(payload->>'faultId', payload->'event'->>'faultId')
    WHEN 'change-apply' THEN payload->'change'->>'id'
    WHEN 'change-clear' THEN payload->>'changeId'
  END
$$;
--> statement-breakpoint
CREATE OR REPLACE FUNCTION loadline_event_source() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  IF EXISTS (
    SELECT 1 FROM pending_injections p
    WHERE p.attempt_id = NEW.attempt_id
      AND p.action->>'type' = CASE WHEN NEW.kind IN ('fault-inject', 'change-apply') THEN 'inject' ELSE 'clear' END
      AND p.action->>'faultId' = loadline_event_fault_id(NEW.kind, NEW.payload)
  ) THEN
    NEW.source := 'instructor';
  END IF;
  RETURN NEW;
END
$$;
--> statement-breakpoint
CREATE OR REPLACE FUNCTION loadline_event_applied() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  UPDATE pending_injections p SET applied_at = now()
  WHERE p.attempt_id = NEW.attempt_id
    AND p.applied_at IS NULL
    AND p.action->>'type' = CASE WHEN NEW.kind IN ('fault-inject', 'change-apply') THEN 'inject' ELSE 'clear' END
    AND p.action->>'faultId' = loadline_event_fault_id(NEW.kind, NEW.payload);
  RETURN NULL;
END
$$;
--> statement-breakpoint
DROP TRIGGER attempt_events_source ON attempt_events;
--> statement-breakpoint
CREATE TRIGGER attempt_events_source BEFORE INSERT ON attempt_events FOR EACH ROW
  WHEN (NEW.kind IN ('fault-inject', 'fault-clear', 'change-apply', 'change-clear')) EXECUTE FUNCTION loadline_event_source();
--> statement-breakpoint
DROP TRIGGER attempt_events_applied ON attempt_events;
--> statement-breakpoint
CREATE TRIGGER attempt_events_applied AFTER INSERT ON attempt_events FOR EACH ROW
  WHEN (NEW.kind IN ('fault-inject', 'fault-clear', 'change-apply', 'change-clear')) EXECUTE FUNCTION loadline_event_applied();
