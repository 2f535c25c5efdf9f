/**
 * The live bench: the model stepping in an animation-frame loop with a
 * fixed-dt accumulator, outside React. Every student input enters through
 * `dispatch`, which stamps it with the sim time and appends it to the event
 * log the replay uses, so what runs here is what the server re-runs: the
 * same compiled car, its schedule in force from the first state, and the
 * same test set-up tracker fed on the same display ticks.
 * React reads immutable snapshots, published once per displayed frame.
 */
import type { VehicleParams } from '../../../../sim/params.ts';
import type { CarChange } from '../../../../sim/car-changes.ts';
import type { DiagnosticTest } from '../../../../sim/faults.ts';
import type { Controls, InputEvent } from '../../../../sim/inputs.ts';
import type { Readings, RippleTrace } from '../../../../sim/instruments.ts';
import type { ReplayPoint } from '../../../../sim/replay.ts';
import { applyInput } from '../../../../sim/inputs.ts';
import { rawClampReadingA, readMeters, rippleTrace } from '../../../../sim/instruments.ts';
import { advance, startPoint } from '../../../../sim/replay.ts';
import { DT_MS } from '../../../../sim/step.ts';
import { DISPLAY_TICK_MS } from '../../../../shared/meter-display.ts';
import { SetupTracker, setupCarOf, setupSampleOf, type SetupStatus } from '../../../../shared/test-setups.ts';
import { MAX_ATTEMPT_MS } from '../../../../shared/api/attempts.ts';

type DistributiveOmit<T, K extends PropertyKey> = T extends unknown ? Omit<T, K> : never;

/** An input as the student gives it; the engine adds the sim time. */
export type BenchInput = DistributiveOmit<InputEvent, 'atMs'>;

/** Frame gaps above this (a hidden tab, a debugger pause) are cut to it: the sim never leaps. */
export const MAX_FRAME_GAP_MS = 100;
/** The strip chart keeps one sample per interval over the last minute. */
export const HISTORY_INTERVAL_MS = 200;
export const HISTORY_SPAN_MS = 60_000;
/** The scope view refreshes a few times a second, like a real sweep. */
const TRACE_INTERVAL_MS = 200;
const TRACE_SAMPLES = 240;
/** The key springs back from start to on after this long, or once the engine runs. */
export const START_HOLD_MS = 1500;
/** The pile counts as loaded (a burst under way) above this current. */
export const BURST_MIN_A = 5;

/** The carbon pile's loaded burst: when the one under way began, and how long the last one lasted (sim ms). */
export interface PileBurst {
  sinceMs: number | null;
  lastMs: number | null;
}

export interface HistorySample {
  tMs: number;
  volts: number | null;
  amps: number | null;
}

export interface MeterDisplay {
  atMs: number;
  readings: Readings;
  /** Each test's set-up at this display tick. */
  setups: Readonly<Record<DiagnosticTest, SetupStatus>>;
}

export interface BenchSnapshot {
  timeMs: number;
  /** The meters at this moment (status, dial, drawing). */
  readings: Readings;
  /** What the readouts show: the meters at the last display tick. */
  display: MeterDisplay;
  controls: Controls;
  /** Changes whenever the strip chart gains a sample. */
  history: readonly HistorySample[];
  trace: RippleTrace | null;
  eventCount: number;
  /**
   * The fusible link burnt open on this bench (held over its rating). A link
   * that was open before the student arrived is not shown: finding it is the job.
   */
  linkBlownHere: boolean;
  burst: PileBurst;
}

export interface BenchEngineOptions {
  params: VehicleParams;
  seed: number;
  /** The car's schedule of changes (a compiled car's), in force from the first state. */
  changes?: readonly CarChange[];
  /** The attempt's own events so far (resume). */
  studentEvents?: readonly InputEvent[];
  /** Sim time to resume at; at least the last event's time. */
  resumeAtMs?: number;
  /** Called with each new student event, in order. */
  onEvent?: (event: InputEvent) => void;
}

export interface BenchEngine {
  readonly params: VehicleParams;
  getSnapshot(): BenchSnapshot;
  subscribe(listener: () => void): () => void;
  /** The one way an input reaches the model. */
  dispatch(input: BenchInput): InputEvent;
  /** Advance by a real-time frame gap (the loop calls this; tests may too). */
  tick(frameGapMs: number): void;
  /** Let sim time pass quickly (waiting for modules to sleep, a rest before a reading). */
  skipAhead(ms: number): void;
  /** The readouts as displayed now, with their sim time (what a recorded reading refers to). */
  readNow(): MeterDisplay;
  /** The controls with every input dispatched so far, before the next frame publishes them. */
  controlsNow(): Controls;
  studentEvents(): readonly InputEvent[];
  start(): void;
  stop(): void;
  running(): boolean;
}

function emptySnapshot(point: ReplayPoint, display: MeterDisplay, eventCount: number): BenchSnapshot {
  return {
    timeMs: point.state.timeMs,
    readings: display.readings,
    display,
    controls: point.controls,
    history: [],
    trace: null,
    eventCount,
    linkBlownHere: point.state.fusibleLinkBlown,
    burst: { sinceMs: display.readings.pileA > BURST_MIN_A ? point.state.timeMs : null, lastMs: null },
  };
}

export function createBenchEngine(options: BenchEngineOptions): BenchEngine {
  const { params, seed, onEvent } = options;
  const student: InputEvent[] = [...(options.studentEvents ?? [])];
  const events: InputEvent[] = [...student];
  const lastEventMs = student.length ? student[student.length - 1]!.atMs : 0;
  const resumeMs = Math.max(lastEventMs, options.resumeAtMs ?? 0);
  // Resume on a display tick, so the readouts are on the grid from the first frame.
  const resumeAt = Math.ceil(resumeMs / DISPLAY_TICK_MS) * DISPLAY_TICK_MS;
  const tracker = new SetupTracker(setupCarOf(params));
  let point: ReplayPoint = startPoint(params, seed, options.changes);
  /** Feeds the tracker the display tick the model is on and reads the meters there. */
  const tickDisplay = (): MeterDisplay => {
    const readings = readMeters(params, point.state);
    tracker.feed(setupSampleOf(params, point.state, readings));
    return { atMs: point.state.timeMs, readings, setups: tracker.statuses() };
  };
  // From the start, a display tick at a time, so the set-ups have seen every tick the server's re-run sees.
  tracker.feed(setupSampleOf(params, point.state, readMeters(params, point.state)));
  for (let t = 0; t < resumeAt; t += DISPLAY_TICK_MS) {
    point = advance(params, point, events, DISPLAY_TICK_MS / DT_MS);
    if (point.state.timeMs < resumeAt) tracker.feed(setupSampleOf(params, point.state, readMeters(params, point.state)));
  }

  const listeners = new Set<() => void>();
  let accumulatorMs = 0;
  let history: HistorySample[] = [];
  let nextHistoryMs = Math.ceil(point.state.timeMs / HISTORY_INTERVAL_MS) * HISTORY_INTERVAL_MS;
  let trace: RippleTrace | null = null;
  let nextTraceMs = 0;
  let keyStartedAtMs: number | null = point.controls.key === 'start' ? point.state.timeMs : null;
  let frame: number | null = null;
  /** An input dispatched while the loop runs, not yet published (the next frame publishes it). */
  let pending = false;
  let lastFrameAt: number | null = null;
  /** The controls with every dispatched event applied (the next step applies them to the model). */
  let shownControls: Controls = point.controls;
  let display: MeterDisplay = resumeAt === 0 ? { atMs: 0, readings: readMeters(params, point.state), setups: tracker.statuses() } : tickDisplay();
  let snapshot = emptySnapshot(point, display, student.length);

  function sample(): void {
    const t = point.state.timeMs;
    if (t < nextHistoryMs) return;
    const r = display.readings;
    const next = history.length && history[0]!.tMs < t - HISTORY_SPAN_MS ? history.filter((h) => h.tMs >= t - HISTORY_SPAN_MS) : history.slice();
    next.push({ tMs: t, volts: r.voltmeterV, amps: r.clampA });
    history = next;
    nextHistoryMs = (Math.floor(t / HISTORY_INTERVAL_MS) + 1) * HISTORY_INTERVAL_MS;
  }

  function refreshTrace(force = false): void {
    const t = point.state.timeMs;
    if (!force && t < nextTraceMs) return;
    nextTraceMs = t + TRACE_INTERVAL_MS;
    const leads = shownControls.leads;
    trace = leads.red && leads.black ? rippleTrace(params, point.state, TRACE_SAMPLES) : null;
  }

  let burst: PileBurst = snapshot.burst;

  function publish(): void {
    pending = false;
    const readings = readMeters(params, point.state);
    const t = point.state.timeMs;
    if (readings.pileA > BURST_MIN_A) {
      if (burst.sinceMs === null) burst = { sinceMs: t, lastMs: burst.lastMs };
    } else if (burst.sinceMs !== null) {
      burst = { sinceMs: null, lastMs: t - burst.sinceMs };
    }
    snapshot = {
      timeMs: t,
      readings,
      display,
      controls: shownControls,
      history,
      trace,
      eventCount: student.length,
      linkBlownHere: point.state.fusibleLinkBlown,
      burst,
    };
    for (const l of [...listeners]) l();
  }

  function stepBy(steps: number): void {
    // Step in slices that end on display ticks, so the readouts, the chart and the spring-back key see each one.
    // The clock stops at the longest an attempt may run (the server refuses events after it).
    let left = Math.min(steps, Math.max(0, Math.floor((MAX_ATTEMPT_MS - point.state.timeMs) / DT_MS)));
    while (left > 0) {
      const toTick = (DISPLAY_TICK_MS - (point.state.timeMs % DISPLAY_TICK_MS)) / DT_MS;
      const slice = Math.min(left, toTick);
      point = advance(params, point, events, slice);
      shownControls = point.controls;
      left -= slice;
      if (point.state.timeMs % DISPLAY_TICK_MS === 0) {
        display = tickDisplay();
        sample();
      }
      springBackKey();
    }
    refreshTrace();
  }

  function springBackKey(): void {
    if (shownControls.key !== 'start' || keyStartedAtMs === null) return;
    const held = point.state.timeMs - keyStartedAtMs;
    if (held >= START_HOLD_MS || (point.state.engineStatus === 'running' && held >= 200)) {
      keyStartedAtMs = null;
      dispatch({ kind: 'key', position: 'on' });
    }
  }

  function dispatch(input: BenchInput): InputEvent {
    const event = { ...input, atMs: point.state.timeMs } as InputEvent;
    student.push(event);
    events.push(event);
    if (event.kind === 'key') keyStartedAtMs = event.position === 'start' ? event.atMs : null;
    // Shown at once; the model takes it before its next step, exactly as a replay does.
    shownControls = applyInput(shownControls, event, rawClampReadingA(point.state, shownControls));
    onEvent?.(event);
    if (event.kind === 'lead') refreshTrace(true);
    // While the loop runs, the next frame shows it (input arrives before the frame's callbacks, so that is
    // the frame the student sees next): a dial dragged at the display's rate costs one render a frame, not two.
    if (frame !== null) pending = true;
    else publish();
    return event;
  }

  function tick(frameGapMs: number): void {
    const gap = Math.min(Math.max(frameGapMs, 0), MAX_FRAME_GAP_MS);
    accumulatorMs += gap;
    const steps = Math.floor(accumulatorMs / DT_MS);
    if (steps <= 0) {
      if (pending) publish();
      return;
    }
    accumulatorMs -= steps * DT_MS;
    stepBy(steps);
    publish();
  }

  function loop(now: number): void {
    const gap = lastFrameAt === null ? 0 : now - lastFrameAt;
    lastFrameAt = now;
    tick(gap);
    frame = requestAnimationFrame(loop);
  }

  return {
    params,
    getSnapshot: () => snapshot,
    subscribe(listener) {
      listeners.add(listener);
      return () => listeners.delete(listener);
    },
    dispatch,
    tick,
    skipAhead(ms) {
      stepBy(Math.max(0, Math.round(ms / DT_MS)));
      publish();
    },
    readNow: () => display,
    controlsNow: () => shownControls,
    studentEvents: () => student,
    start() {
      if (frame !== null) return;
      lastFrameAt = null;
      frame = requestAnimationFrame(loop);
    },
    stop() {
      if (frame !== null) cancelAnimationFrame(frame);
      frame = null;
      if (pending) publish();
    },
    running: () => frame !== null,
  };
}
