/**
 * The replay's clock: the model re-run once over the stored events with a
 * snapshot every few seconds, then played forward step by step, or sought to
 * any moment from the nearest snapshot (at most one interval of steps, so a
 * seek lands in one frame).
 */
import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import type { InputEvent } from '../../../../sim/inputs.ts';
import type { Readings } from '../../../../sim/instruments.ts';
import { readMeters } from '../../../../sim/instruments.ts';
import type { VehicleParams } from '../../../../sim/params.ts';
import type { ReplayPoint } from '../../../../sim/replay.ts';
import { advance, runAttempt, stateAt } from '../../../../sim/replay.ts';
import { DT_MS } from '../../../../sim/step.ts';

export const REPLAY_SPEEDS = [0.5, 1, 2, 4, 8] as const;
export type ReplaySpeed = (typeof REPLAY_SPEEDS)[number];
export const SNAPSHOT_EVERY_MS = 2_000;
/** A frame gap above this (a hidden tab) is cut to it. */
const MAX_FRAME_MS = 100;

export interface ReplayFrame {
  point: ReplayPoint;
  readings: Readings;
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

export function useReplayPlayer(params: VehicleParams, seed: number, events: readonly InputEvent[], durationMs: number, initialMs = 0): ReplayPlayer {
  const run = useMemo(() => runAttempt(params, seed, events, durationMs, { snapshotEveryMs: SNAPSHOT_EVERY_MS }), [params, seed, events, durationMs]);
  const frameAt = useCallback(
    (ms: number): ReplayFrame => {
      const point = stateAt(params, seed, events, Math.min(durationMs, Math.max(0, toGrid(ms))), run.snapshots);
      return { point, readings: readMeters(params, point.state) };
    },
    [params, seed, events, durationMs, run],
  );
  const [frame, setFrame] = useState<ReplayFrame>(() => frameAt(initialMs));
  const [playing, setPlaying] = useState(false);
  const [speed, setSpeed] = useState<ReplaySpeed>(1);
  const pointRef = useRef(frame.point);
  const carryRef = useRef(0);

  const seek = useCallback(
    (ms: number) => {
      const f = frameAt(ms);
      pointRef.current = f.point;
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
        if (n > 0) pointRef.current = advance(params, pointRef.current, events, n);
        setFrame({ point: pointRef.current, readings: readMeters(params, pointRef.current.state) });
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
