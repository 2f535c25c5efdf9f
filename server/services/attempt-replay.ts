/**
 * The server's re-run of an attempt for grading: from the seed, with the
 * scenario's faults at 0 ms and the stored events, to the submission, taking
 * the meters every 100 ms of sim time.
 *
 * What grading reads of each moment (grading.ts `RunSample`) is kept in
 * columns (`SampleLog`), about 67 bytes a sample: a 10-minute re-run holds
 * about 0.4 MB, so one can be carried along for every student at a bench
 * while they work (run-ahead.ts). A re-run is a cursor that can be carried on
 * from any sample boundary: carried on in pieces or run in one go, it takes
 * the same steps and the same samples.
 */
import { CONDUCTORS, type Conductor, type InputEvent } from '../../sim/inputs.ts';
import { readMeters } from '../../sim/instruments.ts';
import type { VehicleParams } from '../../sim/params.ts';
import { advance, orderEvents, startPoint, type ReplayPoint } from '../../sim/replay.ts';
import { DT_MS, type EngineStatus, type SimState } from '../../sim/step.ts';
import type { RunSample } from './grading.ts';

export const SAMPLE_EVERY_MS = 100;
const STEPS_PER_SAMPLE = SAMPLE_EVERY_MS / DT_MS;

const ENGINE_STATUSES: readonly EngineStatus[] = ['off', 'cranking', 'running', 'stalled'];
const VOLTMETER_NULL = 1;
const RIPPLE_NULL = 2;
const CLAMP_NULL = 4;
const AMMETER_NULL = 8;
const PILE_OVERHEATED = 16;
const LINK_BURNT = 32;

/** Float columns of a sample: its time, then the meter values grading reads. */
const FLOAT_COLUMNS = 8;
/** Bytes a sample takes: the float columns, the flags, the engine status and the clamp's conductor. */
export const SAMPLE_BYTES = FLOAT_COLUMNS * 8 + 3;

/** The samples of a re-run, in time order, as columns. */
export class SampleLog {
  length = 0;
  private capacity: number;
  private floats: Float64Array;
  private flags: Uint8Array;
  private engine: Uint8Array;
  private conductor: Uint8Array;

  constructor(capacity = 256) {
    this.capacity = capacity;
    this.floats = new Float64Array(capacity * FLOAT_COLUMNS);
    this.flags = new Uint8Array(capacity);
    this.engine = new Uint8Array(capacity);
    this.conductor = new Uint8Array(capacity);
  }

  /** Memory held, in bytes. */
  get bytes(): number {
    return this.capacity * SAMPLE_BYTES;
  }

  /** The meters at a moment of the run. */
  push(params: VehicleParams, state: SimState): void {
    if (this.length === this.capacity) this.grow();
    const r = readMeters(params, state);
    const i = this.length++;
    const f = this.floats;
    const o = i * FLOAT_COLUMNS;
    f[o] = state.timeMs;
    f[o + 1] = r.voltmeterV ?? 0;
    f[o + 2] = r.rippleVac ?? 0;
    f[o + 3] = r.clampA ?? 0;
    f[o + 4] = r.ammeterA ?? 0;
    f[o + 5] = r.pileA;
    f[o + 6] = r.tachRpm;
    f[o + 7] = r.batterySoc01;
    this.flags[i] =
      (r.voltmeterV === null ? VOLTMETER_NULL : 0) |
      (r.rippleVac === null ? RIPPLE_NULL : 0) |
      (r.clampA === null ? CLAMP_NULL : 0) |
      (r.ammeterA === null ? AMMETER_NULL : 0) |
      (r.pileOverheated ? PILE_OVERHEATED : 0) |
      (state.fusibleLinkBlown ? LINK_BURNT : 0);
    this.engine[i] = ENGINE_STATUSES.indexOf(r.engine);
    const conductor = state.controls.clamp.conductor;
    this.conductor[i] = conductor === null ? 0 : CONDUCTORS.indexOf(conductor) + 1;
  }

  /** The samples as the objects grading reads. */
  toSamples(): RunSample[] {
    const out: RunSample[] = new Array(this.length);
    const f = this.floats;
    for (let i = 0; i < this.length; i++) {
      const o = i * FLOAT_COLUMNS;
      const flags = this.flags[i]!;
      const c = this.conductor[i]!;
      out[i] = {
        atMs: f[o]!,
        readings: {
          voltmeterV: flags & VOLTMETER_NULL ? null : f[o + 1]!,
          rippleVac: flags & RIPPLE_NULL ? null : f[o + 2]!,
          clampA: flags & CLAMP_NULL ? null : f[o + 3]!,
          ammeterA: flags & AMMETER_NULL ? null : f[o + 4]!,
          pileA: f[o + 5]!,
          tachRpm: f[o + 6]!,
          batterySoc01: f[o + 7]!,
          engine: ENGINE_STATUSES[this.engine[i]!]!,
          pileOverheated: (flags & PILE_OVERHEATED) !== 0,
        },
        controls: { clamp: { conductor: c === 0 ? null : (CONDUCTORS[c - 1] as Conductor) } },
        linkBurnt: (flags & LINK_BURNT) !== 0,
      };
    }
    return out;
  }

  private grow(): void {
    const capacity = this.capacity * 2;
    const floats = new Float64Array(capacity * FLOAT_COLUMNS);
    floats.set(this.floats);
    const widen = (a: Uint8Array) => {
      const b = new Uint8Array(capacity);
      b.set(a);
      return b;
    };
    this.floats = floats;
    this.flags = widen(this.flags);
    this.engine = widen(this.engine);
    this.conductor = widen(this.conductor);
    this.capacity = capacity;
  }
}

/** A re-run under way: where it has got to, the events it runs over (in time order) and its samples so far. */
export interface RerunCursor {
  readonly params: VehicleParams;
  point: ReplayPoint;
  /** In time order; more may be appended as long as none is earlier than the last. */
  events: readonly InputEvent[];
  readonly log: SampleLog;
}

/** A re-run at 0 ms, with its first sample taken. */
export function startRerun(params: VehicleParams, seed: number, events: readonly InputEvent[]): RerunCursor {
  const point = startPoint(params, seed);
  const log = new SampleLog();
  log.push(params, point.state);
  return { params, point, events: orderEvents(events), log };
}

/**
 * Carries a re-run on to `untilMs` (the step boundary at or before it),
 * sampling every 100 ms and once more at the end when that falls between.
 * A re-run carried on in pieces must stop on sample boundaries until its last
 * piece, so its samples fall where those of a run in one go do; `maxSamples`
 * bounds the samples taken by this call. True when `untilMs` is reached.
 */
export function carryRerun(c: RerunCursor, untilMs: number, maxSamples = Infinity): boolean {
  const fromSteps = c.point.state.timeMs / DT_MS;
  if (fromSteps % STEPS_PER_SAMPLE !== 0) throw new Error(`a re-run can be carried on only from a sample boundary, not ${c.point.state.timeMs} ms`);
  const totalSteps = Math.floor(untilMs / DT_MS);
  let taken = 0;
  for (let done = fromSteps; done < totalSteps; ) {
    if (taken === maxSamples) return false;
    const n = Math.min(STEPS_PER_SAMPLE, totalSteps - done);
    c.point = advance(c.params, c.point, c.events, n);
    done += n;
    c.log.push(c.params, c.point.state);
    taken++;
  }
  return true;
}

export interface Rerun {
  samples: RunSample[];
  final: ReplayPoint;
}

/** A re-run carried on to `untilMs` and done with: its samples as grading reads them, and where it ended. */
export function finishRerun(c: RerunCursor, untilMs: number): Rerun {
  carryRerun(c, untilMs);
  return { samples: c.log.toSamples(), final: c.point };
}

/** The re-run of an attempt from the start to `untilMs`. */
export function rerunAttempt(params: VehicleParams, seed: number, events: readonly InputEvent[], untilMs: number): Rerun {
  return finishRerun(startRerun(params, seed, events), untilMs);
}
