import { describe, expect, it } from 'vitest';
import { createVoltHold, HOLD_OFF, holdTick } from '../../src/features/bench/stores/volt-hold.ts';
import type { BenchSnapshot } from '../../src/features/bench/stores/bench-engine.ts';

describe('the voltmeter min/max hold', () => {
  it('keeps the lowest and highest volts shown, as the display rounds them, once per display tick', () => {
    let h = holdTick({ ...HOLD_OFF, on: true }, 100, 12.604);
    expect(h).toMatchObject({ min: 12.6, max: 12.6 });
    h = holdTick(h, 200, 9.876);
    h = holdTick(h, 300, 14.254);
    expect(h).toMatchObject({ on: true, min: 9.88, max: 14.25, lastAtMs: 300 });
    // The same tick again, or a meter showing nothing, changes neither.
    expect(holdTick(h, 300, 1)).toBe(h);
    expect(holdTick(h, 400, null)).toMatchObject({ min: 9.88, max: 14.25 });
    // Off, it holds nothing.
    expect(holdTick(HOLD_OFF, 500, 10)).toBe(HOLD_OFF);
  });

  it('follows the bench while on, starts again from what is shown on reset, and forgets all when switched off', () => {
    let volts: number | null = 12.6;
    let atMs = 0;
    const listeners = new Set<() => void>();
    const engine = {
      getSnapshot: () => ({ display: { atMs, readings: { voltmeterV: volts } } }) as unknown as BenchSnapshot,
      subscribe: (l: () => void) => (listeners.add(l), () => void listeners.delete(l)),
    };
    const tick = (v: number | null) => {
      atMs += 100;
      volts = v;
      for (const l of [...listeners]) l();
    };
    const hold = createVoltHold(engine);
    const seen: number[] = [];
    const stop = hold.subscribe(() => seen.push(hold.get().min ?? -1));
    hold.toggle();
    expect(hold.get()).toMatchObject({ on: true, min: 12.6, max: 12.6 });
    tick(10.2); // cranking dip
    tick(13.9);
    expect(hold.get()).toMatchObject({ min: 10.2, max: 13.9 });
    hold.reset();
    expect(hold.get()).toMatchObject({ min: 13.9, max: 13.9 });
    tick(14.1);
    expect(hold.get()).toMatchObject({ min: 13.9, max: 14.1 });
    hold.toggle();
    expect(hold.get()).toEqual(HOLD_OFF);
    tick(8);
    expect(hold.get()).toEqual(HOLD_OFF);
    expect(seen.length).toBeGreaterThan(3);
    stop();
    expect(listeners.size).toBe(0);
  });
});
