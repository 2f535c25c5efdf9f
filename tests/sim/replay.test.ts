/**
 * Replay: the same attempt always gives the same states, from the start or
 * from a snapshot; events take effect at the documented step.
 */
import { describe, expect, it } from 'vitest';
import { defaultVehicleParams } from '../../sim/params';
import type { InputEvent } from '../../sim/inputs';
import { advance, runAttempt, startPoint, stateAt } from '../../sim/replay';
import { DT_MS, step } from '../../sim/step';

const params = defaultVehicleParams();

const DEMO_EVENTS: InputEvent[] = [
  { kind: 'lead', atMs: 0, which: 'red', point: 'battery-pos' },
  { kind: 'lead', atMs: 0, which: 'black', point: 'battery-neg' },
  { kind: 'clamp', atMs: 200, conductor: 'bplus-cable', arrow: 'toward-battery' },
  { kind: 'key', atMs: 1000, position: 'start' },
  { kind: 'key', atMs: 2200, position: 'on' },
  { kind: 'rpm', atMs: 4000, rpm: 2000 },
  { kind: 'fault-inject', atMs: 6000, fault: { id: 'f1', kind: 'diode-open', severity01: 0.5, onsetS: 8, intermittent: { periodS: 2, onFraction01: 0.5 } } },
  { kind: 'pile', atMs: 9003, dial01: 0.4 },
  { kind: 'pile', atMs: 12000, dial01: 0 },
  { kind: 'fault-clear', atMs: 14000, faultId: 'f1' },
];

describe('replay', () => {
  it('gives identical states, bit for bit, for the same params, seed and events', () => {
    const a = runAttempt(params, 42, DEMO_EVENTS, 16000, { snapshotEveryMs: 2000 });
    const b = runAttempt(defaultVehicleParams(), 42, JSON.parse(JSON.stringify(DEMO_EVENTS)), 16000, { snapshotEveryMs: 5000 });
    expect(JSON.stringify(b.final.state)).toBe(JSON.stringify(a.final.state));
  });

  it('gives different noise for a different seed but the same physics', () => {
    const a = runAttempt(params, 1, DEMO_EVENTS, 8000, { snapshotEveryMs: 2000 }).final.state;
    const b = runAttempt(params, 2, DEMO_EVENTS, 8000, { snapshotEveryMs: 2000 }).final.state;
    expect(a.rngState).not.toBe(b.rngState);
    expect(Math.abs(a.engineRpm - b.engineRpm)).toBeLessThan(20);
  });

  it('reaches any moment from a snapshot exactly as from the start', () => {
    const run = runAttempt(params, 9, DEMO_EVENTS, 16000, { snapshotEveryMs: 3000 });
    for (const atMs of [0, 2990, 3000, 7777, 9003, 15990]) {
      const fromStart = stateAt(params, 9, DEMO_EVENTS, atMs);
      const fromSnapshot = stateAt(params, 9, DEMO_EVENTS, atMs, run.snapshots);
      expect(JSON.stringify(fromSnapshot)).toBe(JSON.stringify(fromStart));
      expect(fromStart.state.timeMs).toBe(Math.floor(atMs / DT_MS) * DT_MS);
    }
  });

  it('keeps a snapshot every interval, the first at 0 ms', () => {
    const run = runAttempt(params, 9, DEMO_EVENTS, 16000, { snapshotEveryMs: 3000 });
    expect(run.snapshots.map((s) => s.state.timeMs)).toEqual([0, 3000, 6000, 9000, 12000, 15000]);
    expect(run.final.state.timeMs).toBe(16000);
  });

  it('applies an event before the first step whose start time is at or after its atMs, ties in log order', () => {
    const events: InputEvent[] = [
      { kind: 'pile', atMs: 13, dial01: 0.3 },
      { kind: 'pile', atMs: 13, dial01: 0.6 },
    ];
    let p = startPoint(params, 1);
    p = advance(params, p, events, 1); // step from 0 to 10
    expect(p.state.controls.pileDial01).toBe(0);
    p = advance(params, p, events, 1); // step from 10 to 20: 13 > 10, not yet
    expect(p.state.controls.pileDial01).toBe(0);
    p = advance(params, p, events, 1); // step from 20: both apply, the later wins
    expect(p.state.controls.pileDial01).toBe(0.6);
  });

  it('sorts an out-of-order log by time, keeping the order of equal times', () => {
    const shuffled = [DEMO_EVENTS[5]!, ...DEMO_EVENTS.slice(0, 5), ...DEMO_EVENTS.slice(6)];
    const a = runAttempt(params, 3, DEMO_EVENTS, 10000, { snapshotEveryMs: 5000 }).final.state;
    const b = runAttempt(params, 3, shuffled, 10000, { snapshotEveryMs: 5000 }).final.state;
    expect(JSON.stringify(b)).toBe(JSON.stringify(a));
  });

  it('continues identically from a state that went through JSON (as the server stores it)', () => {
    const mid = stateAt(params, 5, DEMO_EVENTS, 7000);
    const revived = JSON.parse(JSON.stringify(mid));
    const a = advance(params, mid, DEMO_EVENTS, 300);
    const b = advance(params, revived, DEMO_EVENTS, 300);
    expect(JSON.stringify(b.state)).toBe(JSON.stringify(a.state));
  });

  it('lets the client step a fixed number of times per frame with the same result as one long run', () => {
    const whole = stateAt(params, 4, DEMO_EVENTS, 12000);
    let p = startPoint(params, 4);
    for (let frame = 0; frame < 600; frame++) p = advance(params, p, DEMO_EVENTS, 2);
    expect(JSON.stringify(p.state)).toBe(JSON.stringify(whole.state));
    expect(step(params, p.state, p.controls).timeMs).toBe(12000 + DT_MS);
  });
});
