/**
 * The bench's side of a live class: an instructor's fault injections arrive
 * sealed on the attempt's stream; the bench opens each, applies it at its
 * current sim time (the delay counts from there) and logs it as an ordinary
 * fault event, so the replay and the grade see exactly what the student saw.
 */
import { useEffect } from 'react';
import { benchInjectionSchema } from '../../../../shared/api/live.ts';
import { unsealFaults } from '../../../../shared/sealed-faults.ts';
import type { BenchEngine } from '../stores/bench-engine.ts';

function alreadyLogged(engine: BenchEngine, kind: 'fault-inject' | 'fault-clear', faultId: string): boolean {
  return engine.studentEvents().some((e) => (e.kind === 'fault-inject' && kind === e.kind && e.fault.id === faultId) || (e.kind === 'fault-clear' && kind === e.kind && e.faultId === faultId));
}

export function useLiveInjections(attemptId: number, engine: BenchEngine | null, benchKey: string): void {
  useEffect(() => {
    if (!engine || typeof EventSource === 'undefined') return;
    const source = new EventSource(`/api/live/attempts/${attemptId}/stream`);
    let queue = Promise.resolve();
    source.addEventListener('injection', (msg) => {
      queue = queue.then(async () => {
        const parsed = benchInjectionSchema.safeParse(JSON.parse((msg as MessageEvent<string>).data));
        if (!parsed.success) return;
        const m = parsed.data;
        if (m.type === 'clear') {
          if (!alreadyLogged(engine, 'fault-clear', m.faultId)) engine.dispatch({ kind: 'fault-clear', faultId: m.faultId });
          return;
        }
        if (alreadyLogged(engine, 'fault-inject', m.faultId)) return;
        const [fault] = await unsealFaults(m.sealed, benchKey);
        if (!fault) return;
        const atS = engine.getSnapshot().timeMs / 1000;
        engine.dispatch({ kind: 'fault-inject', fault: { ...fault, id: m.faultId, onsetS: atS + fault.onsetS } });
      }).catch(() => undefined);
    });
    source.addEventListener('status', (msg) => {
      const data = JSON.parse((msg as MessageEvent<string>).data) as { status?: string };
      if (data.status === 'submitted') source.close();
    });
    return () => source.close();
  }, [attemptId, engine, benchKey]);
}
