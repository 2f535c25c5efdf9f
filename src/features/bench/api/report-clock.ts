import { BENCH_CLOCK_INTERVAL_MS, benchClockAnswerSchema, type BenchClockAnswer } from '../../../../shared/api/live.ts';
import { api } from '../../../lib/api-client.ts';
import type { Outbox } from './event-outbox.ts';
import type { BenchEngine } from '../stores/bench-engine.ts';

/** POST /api/attempts/:id/clock: the bench's sim time now, for the class board; the answer says whether the attempt still runs. */
export const postBenchClock = (attemptId: number, simTimeMs: number): Promise<BenchClockAnswer> =>
  api.post(`/api/attempts/${attemptId}/clock`, { simTimeMs }, { schema: benchClockAnswerSchema });

/**
 * Reports the running bench's clock every BENCH_CLOCK_INTERVAL_MS while the
 * page is shown and every event is saved: the server then holds every event
 * up to that moment, so the board can run the model to it and no event
 * arrives later that belongs before it. When the server answers that the
 * attempt no longer runs (submitted on another device), the reports stop and
 * `onEnded` is called. Returns the stop function.
 */
export function startClockReports(attemptId: number, engine: BenchEngine, outbox: Outbox, onEnded: () => void): () => void {
  const id = window.setInterval(() => {
    const view = outbox.view();
    if (document.visibilityState === 'hidden' || !engine.running() || view.status !== 'saved' || view.pending > 0) return;
    postBenchClock(attemptId, engine.getSnapshot().timeMs)
      .then((answer) => {
        if (answer.running) return;
        window.clearInterval(id);
        onEnded();
      })
      .catch(() => undefined);
  }, BENCH_CLOCK_INTERVAL_MS);
  return () => window.clearInterval(id);
}
