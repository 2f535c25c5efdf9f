import { BENCH_CLOCK_INTERVAL_MS } from '../../../../shared/api/live.ts';
import { api } from '../../../lib/api-client.ts';
import type { Outbox } from './event-outbox.ts';
import type { BenchEngine } from '../stores/bench-engine.ts';

/** POST /api/attempts/:id/clock: the bench's sim time now, for the class board. */
export const postBenchClock = (attemptId: number, simTimeMs: number): Promise<void> => api.post(`/api/attempts/${attemptId}/clock`, { simTimeMs });

/**
 * Reports the running bench's clock every BENCH_CLOCK_INTERVAL_MS while the
 * page is shown and every event is saved: the server then holds every event
 * up to that moment, so the board can run the model to it and no event
 * arrives later that belongs before it. Returns the stop function.
 */
export function startClockReports(attemptId: number, engine: BenchEngine, outbox: Outbox): () => void {
  const id = window.setInterval(() => {
    const view = outbox.view();
    if (document.visibilityState === 'hidden' || !engine.running() || view.status !== 'saved' || view.pending > 0) return;
    postBenchClock(attemptId, engine.getSnapshot().timeMs).catch(() => undefined);
  }, BENCH_CLOCK_INTERVAL_MS);
  return () => window.clearInterval(id);
}
