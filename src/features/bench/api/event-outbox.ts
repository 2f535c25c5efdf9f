/**
 * The attempt's outbox: every bench event (an input to the car, or a reading
 * recorded or struck out) gets the next sequence number, is
 * written to storage within `persistEveryMs` and at once on `persistNow` (the
 * bench calls it when the page is hidden or unloaded, so a reload loses
 * nothing; a fast dial drag does not write storage every frame), and is posted in
 * batches: every `intervalMs`, or as soon as `batchSize` are waiting. A failed
 * post keeps the batch and retries with a growing delay; the server stores
 * each sequence number once, so sending a batch twice is harmless.
 *
 * Pure of the browser: storage, the sender and the timer are passed in.
 */
import type { LogEvent } from '../../../../shared/api/attempts.ts';

export interface SequencedEvent {
  seq: number;
  event: LogEvent;
}

export interface OutboxStorage {
  getItem(key: string): string | null;
  setItem(key: string, value: string): void;
  removeItem(key: string): void;
}

export interface Timer {
  set(fn: () => void, ms: number): unknown;
  clear(handle: unknown): void;
}

export type OutboxStatus = 'saved' | 'sending' | 'waiting' | 'offline';

export interface OutboxView {
  status: OutboxStatus;
  /** Events not yet acknowledged by the server. */
  pending: number;
  /** Failed posts in a row. */
  failures: number;
  /** Highest sequence number the server has acknowledged. */
  ackedSeq: number;
}

export interface PersistedOutbox {
  pending: SequencedEvent[];
  ackedSeq: number;
  /** Sim time the bench had reached when last saved. */
  simTimeMs: number;
}

export interface OutboxOptions {
  attemptId: number;
  storage: OutboxStorage;
  /** Posts a batch; resolves to the server's `lastSeq` (every event up to it is stored). */
  send: (batch: SequencedEvent[]) => Promise<{ lastSeq: number }>;
  timer: Timer;
  /** Highest sequence number the server already holds. */
  serverSeq: number;
  batchSize?: number;
  intervalMs?: number;
  maxBackoffMs?: number;
  /** Longest an event waits in memory before it is written to storage. */
  persistEveryMs?: number;
  onChange?: (view: OutboxView) => void;
}

export const outboxKey = (attemptId: number) => `loadline.outbox.${attemptId}`;

/** Delay before the next try after `failures` failed posts in a row: 1 s, 2 s, 4 s … up to the cap. */
export function backoffMs(failures: number, baseMs = 1000, maxMs = 30_000): number {
  if (failures <= 0) return baseMs;
  return Math.min(maxMs, baseMs * 2 ** (failures - 1));
}

/** What storage holds for an attempt, or an empty outbox; anything unreadable counts as empty. */
export function readPersisted(storage: OutboxStorage, attemptId: number): PersistedOutbox {
  const empty: PersistedOutbox = { pending: [], ackedSeq: 0, simTimeMs: 0 };
  const raw = storage.getItem(outboxKey(attemptId));
  if (!raw) return empty;
  try {
    const data = JSON.parse(raw) as Partial<PersistedOutbox>;
    const pending = Array.isArray(data.pending) ? data.pending.filter((e) => Number.isInteger(e?.seq) && typeof e?.event?.kind === 'string') : [];
    return {
      pending,
      ackedSeq: Number.isInteger(data.ackedSeq) ? (data.ackedSeq as number) : 0,
      simTimeMs: typeof data.simTimeMs === 'number' && Number.isFinite(data.simTimeMs) ? data.simTimeMs : 0,
    };
  } catch {
    return empty;
  }
}

/**
 * The events to replay on resume: the server's, then the local ones it has
 * not stored yet (by sequence number), in sequence order.
 */
export function mergeForResume(serverEvents: readonly SequencedEvent[], local: readonly SequencedEvent[]): { events: SequencedEvent[]; unsent: SequencedEvent[] } {
  const bySeq = new Map<number, SequencedEvent>();
  for (const e of serverEvents) bySeq.set(e.seq, e);
  const unsent = local.filter((e) => !bySeq.has(e.seq)).sort((a, b) => a.seq - b.seq);
  for (const e of unsent) bySeq.set(e.seq, e);
  const events = [...bySeq.values()].sort((a, b) => a.seq - b.seq);
  return { events, unsent };
}

export interface Outbox {
  push(event: LogEvent): SequencedEvent;
  /** Post what is waiting now; resolves true when nothing is left. */
  flush(): Promise<boolean>;
  view(): OutboxView;
  /** Called whenever the view may have changed; returns an unsubscribe. */
  subscribe(listener: () => void): () => void;
  noteSimTime(ms: number): void;
  /** Write everything to storage now (page hidden or unloading). */
  persistNow(): void;
  start(): void;
  stop(): void;
  /** Forget the attempt's outbox (after a submission). */
  clear(): void;
}

export function createOutbox(options: OutboxOptions): Outbox {
  const { attemptId, storage, send, timer, onChange } = options;
  const batchSize = options.batchSize ?? 50;
  const intervalMs = options.intervalMs ?? 1000;
  const maxBackoffMs = options.maxBackoffMs ?? 30_000;
  const persistEveryMs = options.persistEveryMs ?? 250;
  let persistHandle: unknown = null;

  const saved = readPersisted(storage, attemptId);
  let ackedSeq = Math.max(saved.ackedSeq, options.serverSeq);
  let pending = saved.pending.filter((e) => e.seq > ackedSeq).sort((a, b) => a.seq - b.seq);
  let simTimeMs = saved.simTimeMs;
  let nextSeq = Math.max(ackedSeq, ...pending.map((e) => e.seq)) + 1;
  let failures = 0;
  let inFlight: Promise<boolean> | null = null;
  let handle: unknown = null;
  let started = false;

  function persistSoon(): void {
    if (persistHandle !== null) return;
    persistHandle = timer.set(() => {
      persistHandle = null;
      persist();
    }, persistEveryMs);
  }

  function persist(): void {
    if (persistHandle !== null) {
      timer.clear(persistHandle);
      persistHandle = null;
    }
    try {
      storage.setItem(outboxKey(attemptId), JSON.stringify({ pending, ackedSeq, simTimeMs } satisfies PersistedOutbox));
    } catch {
      // Storage full or blocked: the events still go out from memory.
    }
  }

  function view(): OutboxView {
    const status: OutboxStatus = inFlight ? 'sending' : pending.length === 0 ? 'saved' : failures > 0 ? 'offline' : 'waiting';
    return { status, pending: pending.length, failures, ackedSeq };
  }

  const listeners = new Set<() => void>();
  let current: OutboxView | null = null;
  const changed = () => {
    const next = view();
    if (current && current.status === next.status && current.pending === next.pending && current.failures === next.failures && current.ackedSeq === next.ackedSeq) return;
    current = next;
    onChange?.(next);
    for (const l of [...listeners]) l();
  };

  function schedule(ms: number): void {
    if (!started) return;
    if (handle !== null) timer.clear(handle);
    handle = timer.set(() => {
      handle = null;
      persist();
      void flush().finally(() => schedule(failures > 0 ? backoffMs(failures, intervalMs, maxBackoffMs) : intervalMs));
    }, ms);
  }

  async function sendOnce(): Promise<boolean> {
    while (pending.length > 0) {
      const batch = pending.slice(0, batchSize);
      let lastSeq: number;
      try {
        ({ lastSeq } = await send(batch));
      } catch {
        failures += 1;
        return false;
      }
      const before = pending.length;
      ackedSeq = Math.max(ackedSeq, lastSeq);
      pending = pending.filter((e) => e.seq > ackedSeq);
      persist();
      if (pending.length === before) {
        // The server stored nothing new up to our batch (a gap before it): try again later.
        failures += 1;
        return false;
      }
      failures = 0;
    }
    return true;
  }

  function flush(): Promise<boolean> {
    if (inFlight) return inFlight;
    if (pending.length === 0) {
      persist();
      return Promise.resolve(true);
    }
    inFlight = sendOnce().finally(() => {
      inFlight = null;
      changed();
    });
    changed();
    return inFlight;
  }

  return {
    push(event) {
      const item = { seq: nextSeq++, event };
      pending.push(item);
      persistSoon();
      if (pending.length >= batchSize && failures === 0) void flush();
      else changed();
      return item;
    },
    flush,
    view: () => (current ??= view()),
    subscribe(listener) {
      listeners.add(listener);
      return () => listeners.delete(listener);
    },
    noteSimTime(ms) {
      simTimeMs = ms;
      persist();
    },
    persistNow: persist,
    start() {
      if (started) return;
      started = true;
      schedule(pending.length ? 0 : intervalMs);
    },
    stop() {
      started = false;
      if (handle !== null) timer.clear(handle);
      handle = null;
      persist();
    },
    clear() {
      started = false;
      if (handle !== null) timer.clear(handle);
      if (persistHandle !== null) timer.clear(persistHandle);
      handle = null;
      persistHandle = null;
      pending = [];
      storage.removeItem(outboxKey(attemptId));
      changed();
    },
  };
}
