/**
 * One running bench for one attempt: opens the sealed faults, rebuilds the
 * state from the server's events plus any this browser had not sent yet,
 * starts the model loop and the outbox, and tears both down on leave.
 */
import { useEffect, useState, useSyncExternalStore } from 'react';
import type { Fault } from '../../../../sim/faults.ts';
import type { InputEvent } from '../../../../sim/inputs.ts';
import type { VehicleParams } from '../../../../sim/params.ts';
import type { AttemptBootstrap } from '../../../../shared/api/attempts.ts';
import { unsealEvents, unsealFaults, unsealVehicle } from '../../../../shared/sealed-faults.ts';
import { createOutbox, mergeForResume, readPersisted, type Outbox, type OutboxView } from '../api/event-outbox.ts';
import { postEvents } from '../api/post-events.ts';
import { startClockReports } from '../api/report-clock.ts';
import { createBenchEngine, type BenchEngine } from '../stores/bench-engine.ts';
import { connectLiveInjections } from '../live/live-injections.ts';

export interface BenchSession {
  engine: BenchEngine;
  outbox: Outbox;
  faults: Fault[];
  /** The car the model runs: the bootstrap's, or the sealed one when the scenario sets fault-like values directly. */
  vehicle: VehicleParams;
}

const browserTimer = {
  set: (fn: () => void, ms: number) => window.setTimeout(fn, ms),
  clear: (h: unknown) => window.clearTimeout(h as number),
};

export const faultEvents = (faults: readonly Fault[]): InputEvent[] => faults.map((fault) => ({ kind: 'fault-inject', atMs: 0, fault }));

export function useBenchSession(boot: AttemptBootstrap, enabled: boolean): { session: BenchSession | null; error: Error | null } {
  const [session, setSession] = useState<BenchSession | null>(null);
  const [error, setError] = useState<Error | null>(null);
  const attemptId = boot.attempt.id;

  useEffect(() => {
    if (!enabled) return;
    let cancelled = false;
    let built: BenchSession | null = null;
    let stopLive: (() => void) | null = null;
    let stopClock: (() => void) | null = null;
    let saveTimer: number | undefined;
    const saveTime = () => built?.outbox.noteSimTime(built.engine.getSnapshot().timeMs);
    const onHidden = () => {
      if (document.visibilityState === 'hidden') saveTime();
    };

    void (async () => {
      try {
        const [faults, vehicle, loggedFaultEvents] = await Promise.all([
          unsealFaults(boot.sealedFaults, boot.benchKey),
          boot.sealedVehicle ? unsealVehicle(boot.sealedVehicle, boot.benchKey) : Promise.resolve(boot.vehicle),
          boot.sealedEvents ? unsealEvents(boot.sealedEvents, boot.benchKey) : Promise.resolve([]),
        ]);
        if (cancelled) return;
        const local = readPersisted(window.localStorage, attemptId);
        const { events } = mergeForResume([...boot.events, ...loggedFaultEvents], local.pending);
        const outbox = createOutbox({
          attemptId,
          storage: window.localStorage,
          timer: browserTimer,
          serverSeq: boot.attempt.lastSeq,
          send: (batch) => postEvents(attemptId, batch),
        });
        const engine = createBenchEngine({
          params: vehicle,
          seed: boot.attempt.seed,
          scenarioEvents: faultEvents(faults),
          studentEvents: events.map((e) => e.event),
          resumeAtMs: local.simTimeMs,
          onEvent: (event) => outbox.push(event),
        });
        built = { engine, outbox, faults, vehicle };
        engine.start();
        // Instructors' live faults arrive on the attempt's stream and go through the dispatcher.
        stopLive = connectLiveInjections({ attemptId, benchKey: boot.benchKey, engine });
        outbox.start();
        stopClock = startClockReports(attemptId, engine, outbox);
        saveTimer = window.setInterval(saveTime, 1000);
        window.addEventListener('pagehide', saveTime);
        document.addEventListener('visibilitychange', onHidden);
        setSession(built);
      } catch (err) {
        if (!cancelled) setError(err instanceof Error ? err : new Error(String(err)));
      }
    })();

    return () => {
      cancelled = true;
      window.clearInterval(saveTimer);
      window.removeEventListener('pagehide', saveTime);
      document.removeEventListener('visibilitychange', onHidden);
      if (built) {
        saveTime();
        built.engine.stop();
        stopLive?.();
        stopClock?.();
        built.outbox.stop();
      }
      setSession(null);
    };
  }, [boot, attemptId, enabled]);

  return { session, error };
}

/** The outbox's state for the connection indicator. */
export function useOutboxView(outbox: Outbox): OutboxView {
  return useSyncExternalStore(outbox.subscribe, outbox.view, outbox.view);
}
