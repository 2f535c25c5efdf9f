-- Stores a graded submission in one round trip (server/services/attempt-submit.ts).
-- It locks the attempt's row (a batch of events takes the same lock), then
-- checks that the attempt is still running and that its stored log is the one
-- graded: the same number of events and the same last seq (events never change
-- once stored). Only then does it store the result.
--
-- In a VOLATILE function each statement takes a fresh snapshot, so the count
-- sees every batch committed before the lock was granted, even one that held
-- the lock when this call began. A single statement could not: its snapshot
-- would be taken before it waited for the lock.
--
-- Returns 'stored', 'submitted' (already), 'changed' (grade the new log) or
-- 'missing' (no such attempt).
CREATE OR REPLACE FUNCTION loadline_store_submission(
  p_attempt integer,
  p_events integer,
  p_last_seq integer,
  p_at_ms integer,
  p_readings jsonb,
  p_diagnosis jsonb,
  p_result jsonb,
  p_grade real,
  p_verified boolean,
  p_time_to_diagnosis_ms integer
) RETURNS text
LANGUAGE plpgsql VOLATILE AS $$
DECLARE
  v_status text;
  v_events integer;
  v_last_seq integer;
BEGIN
  SELECT status INTO v_status FROM attempts WHERE id = p_attempt FOR UPDATE;
  IF NOT FOUND THEN
    RETURN 'missing';
  END IF;
  IF v_status = 'submitted' THEN
    RETURN 'submitted';
  END IF;
  SELECT count(*)::integer, coalesce(max(seq), 0)::integer INTO v_events, v_last_seq
    FROM attempt_events WHERE attempt_id = p_attempt;
  IF v_events <> p_events OR v_last_seq <> p_last_seq THEN
    RETURN 'changed';
  END IF;
  UPDATE attempts
     SET status = 'submitted',
         readings = p_readings,
         diagnosis = p_diagnosis,
         result = p_result,
         grade = p_grade,
         verified = p_verified,
         time_to_diagnosis_ms = p_time_to_diagnosis_ms,
         sim_time_ms = greatest(sim_time_ms, p_at_ms),
         submitted_at = now()
   WHERE id = p_attempt;
  RETURN 'stored';
END
$$;
