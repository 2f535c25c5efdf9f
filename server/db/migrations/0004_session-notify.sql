-- Each server process keeps the sessions it has read (server/auth/session.ts)
-- while it listens here: these notifications tell it which to forget. A session
-- ended before its expiry (sign-out, a new session at sign-in) or rewritten or
-- cut short sends its sid; a changed or removed account sends the user's id.
-- Sessions pruned after their expiry send nothing: no process uses them anyway.
CREATE OR REPLACE FUNCTION loadline_session_changed() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  PERFORM pg_notify('loadline_session', OLD.sid);
  RETURN NULL;
END
$$;
--> statement-breakpoint
CREATE TRIGGER session_ended AFTER DELETE ON session FOR EACH ROW
  WHEN (OLD.expire >= now()) EXECUTE FUNCTION loadline_session_changed();
--> statement-breakpoint
CREATE TRIGGER session_rewritten AFTER UPDATE ON session FOR EACH ROW
  WHEN (OLD.sess::text IS DISTINCT FROM NEW.sess::text OR NEW.expire < OLD.expire) EXECUTE FUNCTION loadline_session_changed();
--> statement-breakpoint
CREATE OR REPLACE FUNCTION loadline_user_changed() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  PERFORM pg_notify('loadline_user', OLD.id::text);
  RETURN NULL;
END
$$;
--> statement-breakpoint
CREATE TRIGGER users_changed AFTER UPDATE OR DELETE ON users FOR EACH ROW EXECUTE FUNCTION loadline_user_changed();
