/**
 * Changes to a car's parameters: what a fault does, written as plain
 * operations on parameter paths ({path, op, value}), so that a car can be
 * described without saying which fault it has. A change has an onset in sim
 * seconds and an optional intermittent pattern, like a fault; while it is
 * active its operations apply, in order, to the parameters.
 *
 * The operations are exactly the arithmetic the fault transforms used to do
 * field by field (an addition of two terms is two additions, a division is a
 * division), so a car built from operations runs bit for bit as it did.
 *
 * Paths are dotted: 'battery.capacityAh', 'wiring.fusibleLinkOpen',
 * 'alternator.openDiodes', or a top-level number such as 'ambientC'.
 */

import type { NumericParamPath, VehicleParams } from './params.ts';

export interface IntermittentPattern {
  /** One on/off cycle. */
  periodS: number;
  /** Fraction of each period during which the change is present, starting at the onset. */
  onFraction01: number;
}

/** Parameters that are lists of indices (failed diodes and phases). */
export type IndexListPath = 'alternator.openDiodes' | 'alternator.shortedDiodes' | 'alternator.openPhases';
export const INDEX_LIST_PATHS: readonly IndexListPath[] = ['alternator.openDiodes', 'alternator.shortedDiodes', 'alternator.openPhases'];
/** Parameters that are true or false. */
export type FlagPath = 'wiring.fusibleLinkOpen';
export const FLAG_PATHS: readonly FlagPath[] = ['wiring.fusibleLinkOpen'];

export type NumericOp = 'set' | 'add' | 'mul' | 'div' | 'max' | 'min';
export const NUMERIC_OPS: readonly NumericOp[] = ['set', 'add', 'mul', 'div', 'max', 'min'];

/**
 * One operation. On a number: set it, add, multiply or divide by the value,
 * raise it to at least the value or hold it to at most the value. On a list of indices: include the index
 * (kept sorted, once). On a flag: set it.
 */
export type ParamOp =
  | { path: NumericParamPath; op: NumericOp; value: number }
  | { path: IndexListPath; op: 'include'; value: number }
  | { path: FlagPath; op: 'set'; value: boolean };

export interface CarChange {
  /** Opaque: names the change, never what it stands for. */
  id: string;
  /** Sim time at which the change appears. */
  onsetS: number;
  intermittent: IntermittentPattern | null;
  ops: ParamOp[];
}

/** Whether something with this onset and pattern is present at a sim time. */
export function isScheduledActive(s: { onsetS: number; intermittent?: IntermittentPattern | null }, timeS: number): boolean {
  if (timeS < s.onsetS) return false;
  const pattern = s.intermittent;
  if (!pattern || pattern.periodS <= 0) return true;
  const phase = ((timeS - s.onsetS) % pattern.periodS) / pattern.periodS;
  return phase < pattern.onFraction01;
}

function withIndex(list: readonly number[], index: number): number[] {
  return list.includes(index) ? [...list] : [...list, index].sort((a, b) => a - b);
}

function numeric(x: number, op: NumericOp, v: number): number {
  switch (op) {
    case 'set':
      return v;
    case 'add':
      return x + v;
    case 'mul':
      return x * v;
    case 'div':
      return x / v;
    case 'max':
      return Math.max(x, v);
    case 'min':
      return Math.min(x, v);
  }
}

type Groups = Omit<VehicleParams, 'label' | 'ambientC' | 'engineTempC'>;

/** One operation applied: a new parameter object sharing the untouched groups (`p` is not changed). */
export function applyOp(p: VehicleParams, op: ParamOp): VehicleParams {
  const dot = op.path.indexOf('.');
  if (dot < 0) {
    const key = op.path as 'ambientC' | 'engineTempC';
    return { ...p, [key]: numeric(p[key], op.op as NumericOp, op.value as number) };
  }
  const group = op.path.slice(0, dot) as keyof Groups;
  const key = op.path.slice(dot + 1);
  const before = p[group] as unknown as Record<string, unknown>;
  let value: unknown;
  if (op.op === 'include') value = withIndex(before[key] as number[], op.value);
  else if (typeof op.value === 'boolean') value = op.value;
  else value = numeric(before[key] as number, op.op, op.value);
  return { ...p, [group]: { ...before, [key]: value } };
}

/** Operations applied in order. */
export function applyOps(p: VehicleParams, ops: readonly ParamOp[]): VehicleParams {
  let out = p;
  for (const op of ops) out = applyOp(out, op);
  return out;
}

/**
 * The effective parameters at `timeS` with every change present then, in
 * list order. Pure: returns `params` itself when none is active.
 */
export function applyChanges(params: VehicleParams, changes: readonly CarChange[], timeS: number): VehicleParams {
  let p = params;
  for (const c of changes) {
    if (isScheduledActive(c, timeS)) p = applyOps(p, c.ops);
  }
  return p;
}

/**
 * A small integer that changes exactly when the set of active changes
 * changes (bit i = changes[i] active). The step uses it to reuse effective
 * parameters.
 */
export function activeChangeMask(changes: readonly CarChange[], timeS: number): number {
  let mask = 0;
  for (let i = 0; i < changes.length && i < 30; i++) {
    if (isScheduledActive(changes[i]!, timeS)) mask |= 1 << i;
  }
  return mask;
}
