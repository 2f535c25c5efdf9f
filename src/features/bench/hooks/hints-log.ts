/**
 * The scenario's hints on the bench: a hint is shown only when the student
 * asks for it, and asking is an event of the attempt's log, like a reading,
 * so the instructor sees it in the replay and the grader counts it as the
 * scenario says. The hints opened are read back from the log, so a reload or
 * another device shows the same ones.
 */
import type { LogEvent } from '../../../../shared/api/attempts.ts';
import type { SequencedEvent } from '../api/event-outbox.ts';

export interface HintsLog {
  /** The indexes of the hints opened, in the order opened. */
  opened(): readonly number[];
  subscribe(listener: () => void): () => void;
  /** Opens a hint (logged at the bench's current sim time); one already open is not logged again. */
  open(index: number): void;
}

export function createHintsLog(initial: readonly SequencedEvent[], log: (event: LogEvent) => void, nowMs: () => number): HintsLog {
  let opened: number[] = [];
  for (const e of initial) if (e.event.kind === 'hint' && !opened.includes(e.event.index)) opened.push(e.event.index);
  const listeners = new Set<() => void>();
  return {
    opened: () => opened,
    subscribe(listener) {
      listeners.add(listener);
      return () => listeners.delete(listener);
    },
    open(index) {
      if (opened.includes(index)) return;
      log({ kind: 'hint', atMs: nowMs(), index });
      opened = [...opened, index];
      for (const l of [...listeners]) l();
    },
  };
}
