/**
 * The replay's clock: the attempt's compiled car re-run once over the events
 * the server graded on, with a snapshot every few seconds, then played
 * forward step by step, or sought to any moment from the nearest snapshot
 * (at most one interval of steps, so a seek lands in one frame). The readouts
 * show what the bench's display showed: the meters at the last display tick
 * (every 100 ms of sim time), as a recorded reading is taken.
 */
import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import type { CarChange } from '../../../../sim/car-changes.ts';
import type { InputEvent } from '../../../../sim/inputs.ts';
import type { Readings } from '../../../../sim/instruments.ts';
import { readMeters } from '../../../../sim/instruments.ts';
import type { VehicleParams } from '../../../../sim/params.ts';
import type { ReplayPoint } from '../../../../sim/replay.ts';
import { advance, runAttempt, stateAt } from '../../../../sim/replay.ts';
import { DT_MS } from '../../../../sim/step.ts';
import { DISPLAY_TICK_MS } from '../../../../shared/meter-display.ts';

export const REPLAY_SPEEDS = [0.5, 1, 2, 4, 8] as const;
export type ReplaySpeed = (typeof REPLAY_SPEEDS)[number];
export const SNAPSHOT_EVERY_MS = 2_000;
/** A frame gap above this (a hidden tab) is cut to it. */
const MAX_FRAME_MS = 100;

export interface ReplayFrame {
  point: ReplayPoint;
  readings: Readings;
  /** The meters at the last display tick at or before this moment: what the bench's readouts showed. */
  display: { atMs: number; readings: Readings };
}

export interface ReplayPlayer {
  frame: ReplayFrame;
  timeMs: number;
  durationMs: number;
  playing: boolean;
  speed: ReplaySpeed;
  play(): void;
  pause(): void;
  setSpeed(s: ReplaySpeed): void;
  seek(ms: number): void;
}

const toGrid = (ms: number) => Math.round(ms / DT_MS) * DT_MS;

export function useReplayPlayer(
  params: VehicleParams,
  seed: number,
  events: readonly InputEvent[],
  durationMs: number,
  initialMs = 0,
  changes: readonly CarChange[] = [],
): ReplayPlayer {
  const run = useMemo(() => runAttempt(params, seed, events, durationMs, { snapshotEveryMs: SNAPSHOT_EVERY_MS, changes }), [params, seed, events, durationMs, changes]);
  const frameAt = useCallback(
    (ms: number): ReplayFrame => {
      const atMs = Math.min(durationMs, Math.max(0, toGrid(ms)));
      const point = stateAt(params, seed, events, atMs, run.snapshots, changes);
      const tickMs = Math.floor(atMs / DISPLAY_TICK_MS) * DISPLAY_TICK_MS;
      const tick = tickMs === atMs ? point : stateAt(params, seed, events, tickMs, run.snapshots, changes);
      return { point, readings: readMeters(params, point.state), display: { atMs: tickMs, readings: readMeters(params, tick.state) } };
    },
    [params, seed, events, durationMs, run, changes],
  );
  const [frame, setFrame] = useState<ReplayFrame>(() => frameAt(initialMs));
  const [playing, setPlaying] = useState(false);
  const [speed, setSpeed] = useState<ReplaySpeed>(1);
  const pointRef = useRef(frame.point);
  const displayRef = useRef(frame.display);
  const carryRef = useRef(0);

  const seek = useCallback(
    (ms: number) => {
      const f = frameAt(ms);
      pointRef.current = f.point;
      displayRef.current = f.display;
      carryRef.current = 0;
      setFrame(f);
    },
    [frameAt],
  );

  useEffect(() => {
    if (!playing) return;
    let raf = 0;
    let last: number | null = null;
    const tick = (now: number) => {
      const gap = last === null ? 0 : Math.min(MAX_FRAME_MS, now - last);
      last = now;
      carryRef.current += gap * speed;
      const steps = Math.floor(carryRef.current / DT_MS);
      if (steps > 0) {
        carryRef.current -= steps * DT_MS;
        const left = Math.round((durationMs - pointRef.current.state.timeMs) / DT_MS);
        const n = Math.min(steps, left);
        let display = displayRef.current;
        // Step in slices ending on display ticks, so the readouts take each tick's meters as the bench's did.
        for (let done = 0; done < n; ) {
          const t = pointRef.current.state.timeMs;
          const slice = Math.min(n - done, (DISPLAY_TICK_MS - (t % DISPLAY_TICK_MS)) / DT_MS);
          pointRef.current = advance(params, pointRef.current, events, slice);
          done += slice;
          if (pointRef.current.state.timeMs % DISPLAY_TICK_MS === 0) display = { atMs: pointRef.current.state.timeMs, readings: readMeters(params, pointRef.current.state) };
        }
        displayRef.current = display;
        setFrame({ point: pointRef.current, readings: readMeters(params, pointRef.current.state), display });
        if (n >= left) {
          setPlaying(false);
          return;
        }
      }
      raf = requestAnimationFrame(tick);
    };
    raf = requestAnimationFrame(tick);
    return () => cancelAnimationFrame(raf);
  }, [playing, speed, params, events, durationMs]);

  return {
    frame,
    timeMs: frame.point.state.timeMs,
    durationMs,
    playing,
    speed,
    play: () => {
      if (pointRef.current.state.timeMs >= durationMs) seek(0);
      setPlaying(true);
    },
    pause: () => setPlaying(false),
    setSpeed,
    seek,
  };
}
