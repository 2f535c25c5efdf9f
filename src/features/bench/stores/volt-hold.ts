/**
 * The voltmeter's min/max hold: once switched on, it keeps the lowest and the
 * highest voltage the display has shown since it was switched on or reset
 * (the display's own rounding, shared/meter-display.ts), the way a bench
 * meter's hold catches the dip while cranking that the live digits pass too
 * fast to read. It watches the display ticks of the running bench; it is a
 * view of what was shown, not an input, so nothing of it enters the log.
 */
import { showVolts } from '../../../../shared/meter-display.ts';
import type { BenchEngine } from './bench-engine.ts';

export interface VoltHold {
  on: boolean;
  /** Lowest and highest volts shown since the hold started (null until a reading is shown). */
  min: number | null;
  max: number | null;
  /** Sim time of the last display tick taken in. */
  lastAtMs: number | null;
}

export const HOLD_OFF: VoltHold = { on: false, min: null, max: null, lastAtMs: null };

/** The hold after one display tick: a tick already taken, a hold that is off or a meter showing nothing changes nothing. */
export function holdTick(h: VoltHold, atMs: number, volts: number | null): VoltHold {
  if (!h.on || h.lastAtMs === atMs) return h;
  const shown = showVolts(volts);
  if (!shown) return { ...h, lastAtMs: atMs };
  const min = h.min === null ? shown.value : Math.min(h.min, shown.value);
  const max = h.max === null ? shown.value : Math.max(h.max, shown.value);
  return min === h.min && max === h.max ? { ...h, lastAtMs: atMs } : { on: true, min, max, lastAtMs: atMs };
}

export interface VoltHoldStore {
  get(): VoltHold;
  subscribe(listener: () => void): () => void;
  /** Switches the hold on (starting from what is shown now) or off. */
  toggle(): void;
  /** Starts the min and max again from what is shown now. */
  reset(): void;
}

export function createVoltHold(engine: Pick<BenchEngine, 'getSnapshot' | 'subscribe'>): VoltHoldStore {
  let hold = HOLD_OFF;
  const listeners = new Set<() => void>();
  let unwatch: (() => void) | null = null;
  const set = (next: VoltHold) => {
    if (next.min === hold.min && next.max === hold.max && next.on === hold.on) {
      hold = next;
      return;
    }
    hold = next;
    for (const l of [...listeners]) l();
  };
  const take = () => {
    const d = engine.getSnapshot().display;
    set(holdTick(hold, d.atMs, d.readings.voltmeterV));
  };
  const start = () => {
    set(holdTick({ on: true, min: null, max: null, lastAtMs: null }, engine.getSnapshot().display.atMs, engine.getSnapshot().display.readings.voltmeterV));
    unwatch ??= engine.subscribe(take);
  };
  return {
    get: () => hold,
    subscribe(listener) {
      listeners.add(listener);
      if (hold.on) unwatch ??= engine.subscribe(take);
      return () => {
        listeners.delete(listener);
        if (listeners.size === 0) {
          unwatch?.();
          unwatch = null;
        }
      };
    },
    toggle() {
      if (hold.on) {
        unwatch?.();
        unwatch = null;
        set(HOLD_OFF);
      } else start();
    },
    reset() {
      if (hold.on) start();
    },
  };
}
