/**
 * One running bench for one attempt: rebuilds the state from the server's
 * log plus any events this browser had not sent yet, on the compiled car the
 * bootstrap carries, starts the model loop, the outbox and the one
 * live-injection listener, and tears them down on leave. Readings are events
 * of the log like the car's inputs: recorded here, stored by the server as
 * they are sent, so another device or a reload shows them.
 */
import { useQueryClient } from '@tanstack/react-query';
import { useEffect, useState, useSyncExternalStore } from 'react';
import type { InputEvent } from '../../../../sim/inputs.ts';
import type { VehicleParams } from '../../../../sim/params.ts';
import { modelEvents, type AttemptBootstrap, type LogEvent, type RecordedReading } from '../../../../shared/api/attempts.ts';
import { createOutbox, mergeForResume, readPersisted, type Outbox, type OutboxView, type SequencedEvent } from '../api/event-outbox.ts';
import { attemptKeys } from '../api/get-attempt.ts';
import { postEvents } from '../api/post-events.ts';
import { startClockReports } from '../api/report-clock.ts';
import { createBenchEngine, type BenchEngine } from '../stores/bench-engine.ts';
import { connectLiveInjections } from '../live/live-injections.ts';
import { createHintsLog, type HintsLog } from './hints-log.ts';

/** A recorded reading with its place in the log and whether the server has stored it. */
export interface LoggedReading {
  reading: RecordedReading;
  seq: number;
  stored: boolean;
}

export interface ReadingsLog {
  /** The readings kept (recorded and not struck out), in the order recorded. */
  list(): readonly LoggedReading[];
  subscribe(listener: () => void): () => void;
  /** Logs a reading at the bench's current sim time. */
  record(reading: RecordedReading): void;
  remove(id: string): void;
}

export interface BenchSession {
  engine: BenchEngine;
  outbox: Outbox;
  readings: ReadingsLog;
  /** The scenario's hints the student has opened (events of the log too). */
  hints: HintsLog;
  /** The car the model runs. */
  vehicle: VehicleParams;
}

const browserTimer = {
  set: (fn: () => void, ms: number) => window.setTimeout(fn, ms),
  clear: (h: unknown) => window.clearTimeout(h as number),
};

/** The readings of a log, kept as they are recorded and struck out; stored once the server has the seq. */
export function createReadingsLog(initial: readonly SequencedEvent[], outbox: Pick<Outbox, 'push' | 'view' | 'subscribe'>, nowMs: () => number): ReadingsLog {
  const kept = new Map<string, { reading: RecordedReading; seq: number }>();
  const take = (e: SequencedEvent) => {
    if (e.event.kind === 'reading') kept.set(e.event.reading.id, { reading: e.event.reading, seq: e.seq });
    else if (e.event.kind === 'reading-remove') kept.delete(e.event.readingId);
  };
  for (const e of initial) take(e);
  const listeners = new Set<() => void>();
  // The list changes only when a reading is taken or struck out, or when the server stores one: every other
  // event the outbox sends (a turn of the dial, a key) leaves it the same array, so nothing re-renders for it.
  let cache: { version: number; stored: number; list: LoggedReading[] } | null = null;
  let version = 0;
  const changed = () => {
    for (const l of [...listeners]) l();
  };
  outbox.subscribe(changed);
  const log = (event: LogEvent) => {
    take(outbox.push(event));
    version++;
    changed();
  };
  return {
    list() {
      const acked = outbox.view().ackedSeq;
      // Stored readings are those at or below the acknowledged seq: for the same readings, their count says which.
      let stored = 0;
      for (const k of kept.values()) if (k.seq <= acked) stored++;
      if (cache && cache.version === version && cache.stored === stored) return cache.list;
      const list = [...kept.values()].map((k) => ({ ...k, stored: k.seq <= acked }));
      cache = { version, stored, list };
      return list;
    },
    subscribe(listener) {
      listeners.add(listener);
      return () => listeners.delete(listener);
    },
    record(reading) {
      log({ kind: 'reading', atMs: nowMs(), reading });
    },
    remove(id) {
      if (kept.has(id)) log({ kind: 'reading-remove', atMs: nowMs(), readingId: id });
    },
  };
}

export function useBenchSession(boot: AttemptBootstrap, enabled: boolean): { session: BenchSession | null; error: Error | null } {
  const [session, setSession] = useState<BenchSession | null>(null);
  const [error, setError] = useState<Error | null>(null);
  const attemptId = boot.attempt.id;
  const qc = useQueryClient();

  useEffect(() => {
    if (!enabled) return;
    let built: BenchSession | null = null;
    let stopLive: (() => void) | null = null;
    let stopClock: (() => void) | null = null;
    let saveTimer: number | undefined;
    const saveTime = () => built?.outbox.noteSimTime(built.engine.getSnapshot().timeMs);
    const onHidden = () => {
      if (document.visibilityState === 'hidden') saveTime();
    };
    // Submitted elsewhere (another device): this bench stops and the attempt is read again, which shows its result.
    let ended = false;
    const onEnded = () => {
      if (ended) return;
      ended = true;
      built?.engine.stop();
      stopClock?.();
      stopLive?.();
      void qc.invalidateQueries({ queryKey: attemptKeys.detail(attemptId) });
    };

    try {
      const local = readPersisted(window.localStorage, attemptId);
      const { events } = mergeForResume(boot.events, local.pending);
      const outbox = createOutbox({
        attemptId,
        storage: window.localStorage,
        timer: browserTimer,
        serverSeq: boot.attempt.lastSeq,
        send: (batch) => postEvents(attemptId, batch),
      });
      const engine = createBenchEngine({
        params: boot.car.params,
        seed: boot.attempt.seed,
        changes: boot.car.changes,
        studentEvents: modelEvents(events.map((e) => e.event)) as InputEvent[],
        resumeAtMs: Math.max(local.simTimeMs, ...events.map((e) => e.event.atMs)),
        onEvent: (event) => void outbox.push(event as LogEvent),
      });
      const readings = createReadingsLog(events, outbox, () => engine.getSnapshot().timeMs);
      const hints = createHintsLog(events, (e) => void outbox.push(e), () => engine.getSnapshot().timeMs);
      built = { engine, outbox, readings, hints, vehicle: boot.car.params };
      engine.start();
      // The one listener for the instructor's live injections: they go through the dispatcher like any input.
      stopLive = connectLiveInjections({ attemptId, engine, onSubmitted: onEnded });
      outbox.start();
      stopClock = startClockReports(attemptId, engine, outbox, onEnded);
      saveTimer = window.setInterval(saveTime, 1000);
      window.addEventListener('pagehide', saveTime);
      document.addEventListener('visibilitychange', onHidden);
      setSession(built);
    } catch (err) {
      setError(err instanceof Error ? err : new Error(String(err)));
    }

    return () => {
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
  }, [boot, attemptId, enabled, qc]);

  return { session, error };
}

/** The outbox's state for the connection indicator. */
export function useOutboxView(outbox: Outbox): OutboxView {
  return useSyncExternalStore(outbox.subscribe, outbox.view, outbox.view);
}

/** The readings of the log, re-rendered when one is recorded, struck out or stored. */
export function useLoggedReadings(readings: ReadingsLog): readonly LoggedReading[] {
  return useSyncExternalStore(readings.subscribe, readings.list, readings.list);
}
