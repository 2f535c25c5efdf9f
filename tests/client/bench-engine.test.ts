import { describe, expect, it } from 'vitest';
import { defaultVehicleParams } from '../../sim/params.ts';
import { compileCar } from '../../sim/compiled-car.ts';
import { readMeters } from '../../sim/instruments.ts';
import { stateAt } from '../../sim/replay.ts';
import { DT_MS } from '../../sim/step.ts';
import type { InputEvent } from '../../sim/inputs.ts';
import { MAX_ATTEMPT_MS } from '../../shared/api/attempts.ts';
import { MAX_FRAME_GAP_MS, START_HOLD_MS, createBenchEngine } from '../../src/features/bench/stores/bench-engine.ts';
import { DISPLAY_TICK_MS } from '../../shared/meter-display.ts';
import { benchActions } from '../../src/features/bench/stores/bench-actions.ts';

const params = defaultVehicleParams();
const SEED = 42;

function frames(engine: ReturnType<typeof createBenchEngine>, count: number, gapMs = 1000 / 60) {
  for (let i = 0; i < count; i++) engine.tick(gapMs);
}

describe('the live bench engine', () => {
  it('steps the model a whole number of fixed steps per frame and carries the remainder', () => {
    const engine = createBenchEngine({ params, seed: SEED });
    engine.tick(16.7);
    expect(engine.getSnapshot().timeMs).toBe(10);
    engine.tick(16.7);
    expect(engine.getSnapshot().timeMs).toBe(30);
    frames(engine, 58, 16.7);
    // 60 frames of 16.7 ms = 1002 ms of real time: 100 steps, 2 ms carried.
    expect(engine.getSnapshot().timeMs).toBe(1000);
  });

  it('cuts an oversized frame gap instead of leaping ahead', () => {
    const engine = createBenchEngine({ params, seed: SEED });
    engine.tick(5000);
    expect(engine.getSnapshot().timeMs).toBe(MAX_FRAME_GAP_MS);
  });

  it('stamps each input with the sim time and shows its effect at once', () => {
    const seen: InputEvent[] = [];
    const engine = createBenchEngine({ params, seed: SEED, onEvent: (e) => seen.push(e) });
    frames(engine, 30);
    const event = engine.dispatch(benchActions.clipLead('red', 'battery-pos'));
    expect(event).toEqual({ kind: 'lead', which: 'red', point: 'battery-pos', atMs: engine.getSnapshot().timeMs });
    expect(Number.isInteger(event.atMs)).toBe(true);
    expect(engine.getSnapshot().controls.leads.red).toBe('battery-pos');
    expect(seen).toEqual([event]);
  });

  it('knows every input dispatched while its loop runs, before the next frame shows it', () => {
    const engine = createBenchEngine({ params, seed: SEED });
    const raf = globalThis.requestAnimationFrame;
    const caf = globalThis.cancelAnimationFrame;
    globalThis.requestAnimationFrame = (() => 1) as typeof requestAnimationFrame;
    globalThis.cancelAnimationFrame = (() => undefined) as typeof cancelAnimationFrame;
    try {
      engine.start();
      const shown = engine.getSnapshot();
      engine.dispatch(benchActions.setPile(0.1));
      engine.dispatch(benchActions.setPile(0.2));
      // Not yet shown (the next frame publishes it), but known: a second turn within the frame builds on the first.
      expect(engine.getSnapshot()).toBe(shown);
      expect(engine.controlsNow().pileDial01).toBeCloseTo(0.2, 9);
      engine.tick(1000 / 60);
      expect(engine.getSnapshot().controls.pileDial01).toBeCloseTo(0.2, 9);
      engine.stop();
    } finally {
      globalThis.requestAnimationFrame = raf;
      globalThis.cancelAnimationFrame = caf;
    }
  });

  it('springs the key back from start to on', () => {
    const engine = createBenchEngine({ params, seed: SEED });
    engine.dispatch(benchActions.turnKey('start'));
    frames(engine, Math.ceil(START_HOLD_MS / 16) + 10);
    const keys = engine.studentEvents().filter((e) => e.kind === 'key');
    expect(keys.map((e) => (e.kind === 'key' ? e.position : null))).toEqual(['start', 'on']);
    expect(engine.getSnapshot().controls.key).toBe('on');
  });

  it('ends in exactly the state a replay of its own event log reaches', () => {
    const engine = createBenchEngine({ params, seed: SEED });
    engine.dispatch(benchActions.clipLead('red', 'battery-pos'));
    engine.dispatch(benchActions.clipLead('black', 'battery-neg'));
    engine.dispatch(benchActions.placeClamp('bplus-cable', 'toward-battery'));
    engine.dispatch(benchActions.turnKey('start'));
    frames(engine, 150, 16.7);
    engine.dispatch(benchActions.holdRpm(2000));
    frames(engine, 90, 13.1);
    engine.dispatch(benchActions.setPile(0.4));
    frames(engine, 60, 21.9);
    const live = engine.readNow();
    // A reading is the display: on the 100 ms grid the server samples, never ahead of the model.
    expect(live.atMs % DISPLAY_TICK_MS).toBe(0);
    expect(live.atMs).toBeLessThanOrEqual(engine.getSnapshot().timeMs);
    expect(engine.getSnapshot().timeMs - live.atMs).toBeLessThan(DISPLAY_TICK_MS);
    const replayed = stateAt(params, SEED, engine.studentEvents(), live.atMs);
    expect(replayed.state.timeMs).toBe(live.atMs);
    expect(readMeters(params, replayed.state)).toEqual(live.readings);
  });

  it('resumes from a stored log at the saved sim time with the same readings', () => {
    const first = createBenchEngine({ params, seed: SEED });
    first.dispatch(benchActions.clipLead('red', 'battery-pos'));
    first.dispatch(benchActions.clipLead('black', 'battery-neg'));
    first.dispatch(benchActions.turnKey('on'));
    frames(first, 100);
    first.dispatch(benchActions.switchAccessory('headlamps', true));
    frames(first, 100);
    const at = first.readNow();
    const second = createBenchEngine({ params, seed: SEED, studentEvents: first.studentEvents(), resumeAtMs: at.atMs });
    expect(second.readNow()).toEqual(at);
    expect(second.getSnapshot().controls.accessoriesOn).toEqual(['headlamps']);
  });

  it('does not show a link that was open before the student arrived, only one burnt open on the bench', () => {
    const car = compileCar(params, [{ id: 'f', kind: 'fusible-link-open', severity01: 1, onsetS: 0 }], 'car');
    const engine = createBenchEngine({ params: car.params, seed: SEED, changes: car.changes });
    // In force from the first state.
    expect(engine.getSnapshot().readings.fusibleLinkOpen).toBe(true);
    frames(engine, 10);
    expect(engine.getSnapshot().readings.fusibleLinkOpen).toBe(true);
    expect(engine.getSnapshot().linkBlownHere).toBe(false);
  });

  it('lets sim time pass quickly in whole steps', () => {
    const engine = createBenchEngine({ params, seed: SEED });
    engine.skipAhead(60_000);
    expect(engine.getSnapshot().timeMs).toBe(60_000);
    expect(engine.getSnapshot().timeMs % DT_MS).toBe(0);
    expect(engine.getSnapshot().history.length).toBeGreaterThan(200);
  });
});

describe('the bench clock’s limit', () => {
  it('stops at the longest an attempt may run, so every event it stamps is one the server takes', () => {
    // Resumed a little before the limit (the model runs the two hours to get there, as a reload would).
    const engine = createBenchEngine({ params, seed: SEED, changes: [], resumeAtMs: MAX_ATTEMPT_MS - 1000 });
    engine.skipAhead(300_000);
    expect(engine.getSnapshot().timeMs).toBe(MAX_ATTEMPT_MS);
    frames(engine, 120);
    expect(engine.getSnapshot().timeMs).toBe(MAX_ATTEMPT_MS);
    expect(engine.dispatch(benchActions.turnKey('on')).atMs).toBe(MAX_ATTEMPT_MS);
  });
});
