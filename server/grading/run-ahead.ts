/**
 * Running attempts ahead of their submission. The grading worker is sent each
 * batch of events as it is stored, and carries a re-run of the attempt on to
 * the latest sample boundary the log has reached; a submission then re-runs
 * only the stretch since the last batch instead of the whole attempt.
 *
 * Correctness does not rest on the bookkeeping. A submission's job carries
 * the whole log as the database holds it, and the re-run carried ahead is
 * used only when the car and the seed are the same, and that log starts with
 * exactly the events it ran over and the rest come no earlier in sim time:
 * the same inputs, so the same re-run. Anything else (a batch stored by another process, a gap, an event out
 * of time order, a restart that lost the worker) simply means the submission
 * re-runs from the start, as it would without this.
 *
 * Memory is bounded: past `budgetBytes` the attempts fed longest ago are
 * dropped (about 0.4 MB per 10 minutes of sim time).
 */
import type { CompiledCar } from '../../sim/compiled-car.ts';
import type { InputEvent } from '../../sim/inputs.ts';
import { DISPLAY_TICK_MS } from '../../shared/meter-display.ts';
import { carryRerun, startRerun, type SampledRerun } from './rerun.ts';

/** A batch just stored, as sent to the grading worker. */
export interface AheadFeed {
  attemptId: number;
  seed: number;
  /** The log's lastSeq before this batch; 0 starts the attempt's re-run. */
  fromSeq: number;
  /** The log's lastSeq after it. */
  toSeq: number;
  /** The model's events among seqs fromSeq+1..toSeq of the stored log, by seq (readings left out). */
  events: InputEvent[];
  /** With fromSeq 0: the attempt's compiled car (what a grading job runs). */
  start?: { car: CompiledCar };
}

/** What a submission's job says about its attempt, to check a re-run carried ahead against. */
export interface AheadClaim {
  attemptId: number;
  car: CompiledCar;
  seed: number;
  /** The model's events, by seq. */
  events: readonly InputEvent[];
  /** The submission's sim time. */
  atMs: number;
}

interface Entry {
  seed: number;
  lastSeq: number;
  /** The latest sim time among the events. */
  maxAtMs: number;
  /** The events run over, in order; the cursor reads this same array. */
  events: InputEvent[];
  cursor: SampledRerun;
  bytes: number;
}

/** A rough size of an event held in memory. */
const EVENT_BYTES = 160;

/** Data equal field by field (objects in any key order; a key set to undefined counts as absent, as after a round trip through JSON). */
export function sameData(a: unknown, b: unknown): boolean {
  if (a === b) return true;
  if (typeof a !== 'object' || typeof b !== 'object' || a === null || b === null) return false;
  if (Array.isArray(a) !== Array.isArray(b)) return false;
  if (Array.isArray(a)) {
    const bb = b as unknown[];
    return a.length === bb.length && a.every((x, i) => sameData(x, bb[i]));
  }
  const ao = a as Record<string, unknown>;
  const bo = b as Record<string, unknown>;
  const keys = (o: Record<string, unknown>) => Object.keys(o).filter((k) => o[k] !== undefined);
  const ak = keys(ao);
  return ak.length === keys(bo).length && ak.every((k) => Object.hasOwn(bo, k) && sameData(ao[k], bo[k]));
}

/** The sample boundary at or before a sim time: as far as a re-run can go before events at or after that time are known. */
const boundaryAtOrBefore = (ms: number) => Math.floor(ms / DISPLAY_TICK_MS) * DISPLAY_TICK_MS;

export interface RunAheadStats {
  attempts: number;
  bytes: number;
  /** Attempts dropped to stay within the budget. */
  evicted: number;
}

export class RunAhead {
  private readonly entries = new Map<number, Entry>();
  /** Attempts whose re-run is behind the latest boundary of their log. */
  private readonly behind = new Set<number>();
  private bytes = 0;
  private evicted = 0;

  constructor(private readonly budgetBytes: number) {}

  /** Takes a stored batch: starts, carries on or drops the attempt's entry. The re-running is left to `work`. */
  feed(f: AheadFeed): void {
    let e = this.entries.get(f.attemptId);
    if (f.fromSeq === 0) {
      this.drop(f.attemptId);
      if (!f.start) return;
      const events: InputEvent[] = [];
      const cursor = startRerun(f.start.car.params, f.seed, events, f.start.car.changes);
      // startRerun keeps an array in order as it is; the cursor must read the one appended to here.
      if (cursor.events !== events) return;
      e = { seed: f.seed, lastSeq: 0, maxAtMs: 0, events, cursor, bytes: 0 };
    } else if (!e || e.lastSeq !== f.fromSeq || e.seed !== f.seed) {
      this.drop(f.attemptId);
      return;
    } else {
      this.entries.delete(f.attemptId);
    }
    if (!inTimeOrder(f.events, e.maxAtMs)) {
      this.drop(f.attemptId);
      return;
    }
    e.events.push(...f.events);
    e.lastSeq = f.toSeq;
    e.maxAtMs = maxAt(f.events, e.maxAtMs);
    this.entries.set(f.attemptId, e);
    this.resize(e);
    if (e.cursor.point.state.timeMs < boundaryAtOrBefore(e.maxAtMs)) this.behind.add(f.attemptId);
    this.keepWithinBudget();
  }

  /** Forgets an attempt's entry. */
  drop(attemptId: number): void {
    const e = this.entries.get(attemptId);
    if (!e) return;
    this.bytes -= e.bytes;
    this.entries.delete(attemptId);
    this.behind.delete(attemptId);
  }

  /** Whether some attempt's re-run is behind its log. */
  get pending(): boolean {
    return this.behind.size > 0;
  }

  /** Carries re-runs on towards their logs, taking at most `maxSamples` samples in all. True while work remains. */
  work(maxSamples: number): boolean {
    let left = maxSamples;
    for (const id of this.behind) {
      if (left <= 0) break;
      const e = this.entries.get(id)!;
      const before = e.cursor.log.length;
      const reached = carryRerun(e.cursor, boundaryAtOrBefore(e.maxAtMs), left);
      left -= e.cursor.log.length - before;
      if (reached) this.behind.delete(id);
      this.resize(e);
    }
    this.keepWithinBudget();
    return this.pending;
  }

  /**
   * The attempt's re-run carried on to the claim's submission, when the claim
   * bears it out; null otherwise. Either way the entry is gone afterwards.
   */
  take(claim: AheadClaim): SampledRerun | null {
    const e = this.entries.get(claim.attemptId);
    if (!e) return null;
    this.drop(claim.attemptId);
    if (e.seed !== claim.seed || !sameData(e.cursor.params, claim.car.params) || !sameData(e.cursor.changes, claim.car.changes)) return null;
    const n = e.events.length;
    if (claim.events.length < n) return null;
    for (let i = 0; i < n; i++) if (!sameData(claim.events[i], e.events[i])) return null;
    if (!inTimeOrder(claim.events.slice(n), e.maxAtMs)) return null;
    carryRerun(e.cursor, boundaryAtOrBefore(e.maxAtMs));
    if (e.cursor.point.state.timeMs > claim.atMs) return null;
    // From here the job's own events: the same ones up to n, then the rest, all in time order.
    e.cursor.events = claim.events;
    return e.cursor;
  }

  stats(): RunAheadStats {
    return { attempts: this.entries.size, bytes: this.bytes, evicted: this.evicted };
  }

  private resize(e: Entry): void {
    const bytes = e.cursor.log.bytes + e.events.length * EVENT_BYTES;
    this.bytes += bytes - e.bytes;
    e.bytes = bytes;
  }

  private keepWithinBudget(): void {
    for (const id of this.entries.keys()) {
      if (this.bytes <= this.budgetBytes) return;
      this.drop(id);
      this.evicted++;
    }
  }
}

function inTimeOrder(events: readonly InputEvent[], fromMs: number): boolean {
  let t = fromMs;
  for (const e of events) {
    if (e.atMs < t) return false;
    t = e.atMs;
  }
  return true;
}

function maxAt(events: readonly InputEvent[], fromMs: number): number {
  let t = fromMs;
  for (const e of events) t = Math.max(t, e.atMs);
  return t;
}
