/**
 * The seeded generator kept in the state (mulberry32): the state is a uint32;
 * `nextRngState` advances it and `rngValue` maps a state to a uniform number
 * in [0, 1). No Math.random anywhere in sim/.
 */

export function nextRngState(stateU32: number): number {
  return (stateU32 + 0x6d2b79f5) >>> 0;
}

export function rngValue(stateU32: number): number {
  const s = stateU32;
  let t = Math.imul(s ^ (s >>> 15), 1 | s);
  t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
  return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
}
