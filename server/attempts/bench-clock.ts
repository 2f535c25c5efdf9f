/**
 * The open bench's clock. A running bench reports its sim time every few
 * seconds (BENCH_CLOCK_INTERVAL_MS); the class board re-runs the attempt to
 * that moment, so it shows the meters as they are now rather than as of the
 * last input, and tells a bench that has gone quiet (closed or hidden) from
 * one at work. One statement stores it (never backwards) and announces it to
 * the boards.
 */
import type pg from 'pg';
import { BENCH_CLOCK_CHANNEL } from '../db/live-bus.ts';

export async function reportBenchClock(pool: pg.Pool, attemptId: number, userId: number, simTimeMs: number): Promise<boolean> {
  const { rowCount } = await pool.query({
    name: 'loadline-bench-clock',
    text: `with stored as (
             update attempts set bench_time_ms = greatest(coalesce(bench_time_ms, 0), $3), bench_seen_at = now()
             where id = $1 and user_id = $2 and status = 'running'
             returning id)
           select pg_notify('${BENCH_CLOCK_CHANNEL}', id::text) from stored`,
    values: [attemptId, userId, simTimeMs],
  });
  return (rowCount ?? 0) > 0;
}
