/**
 * The server's re-run of an attempt for grading: from the seed, on the
 * attempt's compiled car (its schedule of changes in force from the first
 * state), over the model's events of the log, to the submission, taking the
 * meters and the test set-ups' inputs every 100 ms of sim time (the bench's
 * display tick).
 *
 * What grading reads of each moment (grade-attempt.ts `RunSample`) is kept in
 * columns (`SampleLog`), 112 bytes a sample: a 10-minute re-run holds
 * about 0.7 MB, so one can be carried along for every student at a bench
 * while they work (run-ahead.ts). A re-run is the server's re-run cursor
 * (attempts/rerun-cursor.ts) with a sample log, carried on from any sample
 * boundary: carried on in pieces or run in one go, it takes the same steps
 * and the same samples.
 */
import type { CarChange } from '../../sim/car-changes.ts';
import { CONDUCTORS, CONNECTION_POINTS, type Conductor, type ConnectionPoint, type InputEvent, type KeyPosition } from '../../sim/inputs.ts';
import { readMeters } from '../../sim/instruments.ts';
import type { VehicleParams } from '../../sim/params.ts';
import type { ReplayPoint } from '../../sim/replay.ts';
import { DT_MS, type EngineStatus, type SimState } from '../../sim/step.ts';
import { DISPLAY_TICK_MS } from '../../shared/meter-display.ts';
import { setupSampleOf } from '../../shared/test-setups.ts';
import { cursorTimeMs, startCursor, stepCursor, type RerunCursor } from '../attempts/rerun-cursor.ts';
import type { RunSample, SampleReadings } from './grade-attempt.ts';

const STEPS_PER_SAMPLE = DISPLAY_TICK_MS / DT_MS;

const ENGINE_STATUSES: readonly EngineStatus[] = ['off', 'cranking', 'running', 'stalled'];
const KEY_POSITIONS: readonly KeyPosition[] = ['off', 'on', 'start'];
const VOLTMETER_NULL = 1;
const RIPPLE_NULL = 2;
const CLAMP_NULL = 4;
const AMMETER_NULL = 8;
const PILE_OVERHEATED = 16;
const LINK_BURNT = 32;
const CLAMP_ZERO_AWAY = 64;
const AMMETER_IN_SERIES = 128;
const BPLUS_OFF = 1;
const ARROW_TO_ALTERNATOR = 2;

/** Float columns of a sample: its time, the meter values grading reads, then what the set-ups and the process checks read. */
const FLOAT_COLUMNS = 14;
/** Byte columns: two sets of flags, the engine status, the key, the clamp's conductor, each lead's point, the accessories on. */
const BYTE_COLUMNS = 8;
/** Bytes a sample takes. */
export const SAMPLE_BYTES = FLOAT_COLUMNS * 8 + BYTE_COLUMNS;

const pointCode = (p: ConnectionPoint | null) => (p === null ? 0 : CONNECTION_POINTS.indexOf(p) + 1);
const pointOf = (code: number): ConnectionPoint | null => (code === 0 ? null : CONNECTION_POINTS[code - 1]!);

/** The samples of a re-run, in time order, as columns. */
export class SampleLog {
  length = 0;
  private capacity: number;
  private floats: Float64Array;
  private bytes8: Uint8Array;

  constructor(capacity = 256) {
    this.capacity = capacity;
    this.floats = new Float64Array(capacity * FLOAT_COLUMNS);
    this.bytes8 = new Uint8Array(capacity * BYTE_COLUMNS);
  }

  /** Memory held, in bytes. */
  get bytes(): number {
    return this.capacity * SAMPLE_BYTES;
  }

  /** The meters and the set-up at a moment of the run. */
  push(params: VehicleParams, state: SimState): void {
    if (this.length === this.capacity) this.grow();
    const r = readMeters(params, state);
    const setup = setupSampleOf(params, state, r);
    const c = state.controls;
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
    f[o + 8] = setup.switchedLoadA;
    f[o + 9] = setup.batteryA;
    f[o + 10] = state.fusibleLinkHeat01;
    f[o + 11] = setup.modulesAwakeS;
    f[o + 12] = setup.pileDial01;
    f[o + 13] = setup.outputA;
    const b = this.bytes8;
    const k = i * BYTE_COLUMNS;
    b[k] =
      (r.voltmeterV === null ? VOLTMETER_NULL : 0) |
      (r.rippleVac === null ? RIPPLE_NULL : 0) |
      (r.clampA === null ? CLAMP_NULL : 0) |
      (r.ammeterA === null ? AMMETER_NULL : 0) |
      (r.pileOverheated ? PILE_OVERHEATED : 0) |
      (state.fusibleLinkBlown ? LINK_BURNT : 0) |
      (c.clampZeroAway ? CLAMP_ZERO_AWAY : 0) |
      (c.ammeterInSeries ? AMMETER_IN_SERIES : 0);
    b[k + 1] = (c.bplusConnected ? 0 : BPLUS_OFF) | (c.clamp.arrow === 'toward-alternator' ? ARROW_TO_ALTERNATOR : 0);
    b[k + 2] = ENGINE_STATUSES.indexOf(r.engine);
    b[k + 3] = KEY_POSITIONS.indexOf(c.key);
    b[k + 4] = c.clamp.conductor === null ? 0 : CONDUCTORS.indexOf(c.clamp.conductor) + 1;
    b[k + 5] = pointCode(c.leads.red);
    b[k + 6] = pointCode(c.leads.black);
    b[k + 7] = Math.min(255, setup.accessoriesOn);
  }

  /** The samples as the objects grading reads. */
  toSamples(): RunSample[] {
    const out: RunSample[] = new Array(this.length);
    const f = this.floats;
    const b = this.bytes8;
    for (let i = 0; i < this.length; i++) {
      const o = i * FLOAT_COLUMNS;
      const k = i * BYTE_COLUMNS;
      const flags = b[k]!;
      const flags2 = b[k + 1]!;
      const c = b[k + 4]!;
      const conductor = c === 0 ? null : (CONDUCTORS[c - 1] as Conductor);
      const engine = ENGINE_STATUSES[b[k + 2]!]!;
      const voltmeterV = flags & VOLTMETER_NULL ? null : f[o + 1]!;
      const readings: SampleReadings = {
        voltmeterV,
        rippleVac: flags & RIPPLE_NULL ? null : f[o + 2]!,
        clampA: flags & CLAMP_NULL ? null : f[o + 3]!,
        ammeterA: flags & AMMETER_NULL ? null : f[o + 4]!,
        pileA: f[o + 5]!,
        tachRpm: f[o + 6]!,
        batterySoc01: f[o + 7]!,
        engine,
        pileOverheated: (flags & PILE_OVERHEATED) !== 0,
      };
      out[i] = {
        atMs: f[o]!,
        readings,
        setup: {
          atMs: f[o]!,
          engine,
          key: KEY_POSITIONS[b[k + 3]!]!,
          tachRpm: readings.tachRpm,
          red: pointOf(b[k + 5]!),
          black: pointOf(b[k + 6]!),
          clampOn: conductor,
          clampArrow: flags2 & ARROW_TO_ALTERNATOR ? 'toward-alternator' : 'toward-battery',
          clampZeroAway: (flags & CLAMP_ZERO_AWAY) !== 0,
          ammeterInSeries: (flags & AMMETER_IN_SERIES) !== 0,
          modulesAwakeS: f[o + 11]!,
          accessoriesOn: b[k + 7]!,
          switchedLoadA: f[o + 8]!,
          pileA: readings.pileA,
          pileDial01: f[o + 12]!,
          batteryA: f[o + 9]!,
          outputA: f[o + 13]!,
          voltmeterV,
        },
        linkBurnt: (flags & LINK_BURNT) !== 0,
        linkHeat01: f[o + 10]!,
        bplusConnected: (flags2 & BPLUS_OFF) === 0,
      };
    }
    return out;
  }

  private grow(): void {
    const capacity = this.capacity * 2;
    const floats = new Float64Array(capacity * FLOAT_COLUMNS);
    floats.set(this.floats);
    const bytes8 = new Uint8Array(capacity * BYTE_COLUMNS);
    bytes8.set(this.bytes8);
    this.floats = floats;
    this.bytes8 = bytes8;
    this.capacity = capacity;
  }
}

/** A re-run under way (attempts/rerun-cursor.ts) with its samples so far. */
export interface SampledRerun extends RerunCursor {
  readonly log: SampleLog;
}

/** A re-run at 0 ms, with its first sample taken. */
export function startRerun(params: VehicleParams, seed: number, events: readonly InputEvent[], changes: readonly CarChange[] = []): SampledRerun {
  const cursor = startCursor(params, seed, events, changes);
  const log = new SampleLog();
  log.push(params, cursor.point.state);
  return Object.assign(cursor, { log });
}

/**
 * Carries a re-run on to `untilMs` (the step boundary at or before it),
 * sampling every 100 ms and once more at the end when that falls between.
 * A re-run carried on in pieces must stop on sample boundaries until its last
 * piece, so its samples fall where those of a run in one go do; `maxSamples`
 * bounds the samples taken by this call. True when `untilMs` is reached.
 */
export function carryRerun(c: SampledRerun, untilMs: number, maxSamples = Infinity): boolean {
  const fromSteps = cursorTimeMs(c) / DT_MS;
  if (fromSteps % STEPS_PER_SAMPLE !== 0) throw new Error(`a re-run can be carried on only from a sample boundary, not ${c.point.state.timeMs} ms`);
  const totalSteps = Math.floor(untilMs / DT_MS);
  let taken = 0;
  for (let done = fromSteps; done < totalSteps; ) {
    if (taken === maxSamples) return false;
    const n = Math.min(STEPS_PER_SAMPLE, totalSteps - done);
    stepCursor(c, n);
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
export function finishRerun(c: SampledRerun, untilMs: number): Rerun {
  carryRerun(c, untilMs);
  return { samples: c.log.toSamples(), final: c.point };
}

/** The re-run of an attempt from the start to `untilMs`. */
export function rerunAttempt(params: VehicleParams, seed: number, events: readonly InputEvent[], untilMs: number, changes: readonly CarChange[] = []): Rerun {
  return finishRerun(startRerun(params, seed, events, changes), untilMs);
}
