/**
 * React's view of the live bench: the engine from context, and snapshot
 * selections that re-render a component only when its part changes.
 */
import { createContext, useCallback, useContext, useRef, useSyncExternalStore } from 'react';
import type { BenchEngine, BenchInput, BenchSnapshot } from '../stores/bench-engine.ts';

export const BenchEngineContext = createContext<BenchEngine | null>(null);

export function useBenchEngine(): BenchEngine {
  const engine = useContext(BenchEngineContext);
  if (!engine) throw new Error('useBenchEngine needs a BenchEngineContext provider');
  return engine;
}

/** The one dispatcher: every control, key and drag sends its input through it. */
export function useBenchDispatch(): (input: BenchInput) => void {
  const engine = useBenchEngine();
  return useCallback((input: BenchInput) => void engine.dispatch(input), [engine]);
}

/**
 * A part of the current snapshot. `equal` decides when the part has changed
 * (by default identity), so a component can ignore what it does not show.
 */
export function useBench<T>(select: (s: BenchSnapshot) => T, equal: (a: T, b: T) => boolean = Object.is): T {
  const engine = useBenchEngine();
  const cache = useRef<{ snap: BenchSnapshot; value: T } | null>(null);
  const selectRef = useRef(select);
  const equalRef = useRef(equal);
  selectRef.current = select;
  equalRef.current = equal;
  const get = useCallback(() => {
    const snap = engine.getSnapshot();
    const c = cache.current;
    if (c && c.snap === snap) return c.value;
    const value = selectRef.current(snap);
    if (c && equalRef.current(c.value, value)) {
      c.snap = snap;
      return c.value;
    }
    cache.current = { snap, value };
    return value;
  }, [engine]);
  return useSyncExternalStore(engine.subscribe, get, get);
}

export const shallowEqual = <T extends object>(a: T, b: T): boolean => {
  if (a === b) return true;
  const ka = Object.keys(a) as (keyof T)[];
  if (ka.length !== Object.keys(b).length) return false;
  return ka.every((k) => Object.is(a[k], b[k]));
};
