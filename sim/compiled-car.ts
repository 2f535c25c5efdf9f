/**
 * The car a bench simulates: the parameters with every fault already applied
 * that is present from the first moment to the last, and a schedule of
 * changes for the faults that come later or come and go. It says what the
 * car is, not what is wrong with it: no fault kind, label or severity, and
 * the changes have opaque ids. The bench and the server's re-run start from
 * the same compiled car, so they run the same steps bit for bit.
 */

import type { CarChange } from './car-changes.ts';
import { applyOps } from './car-changes.ts';
import type { Fault } from './faults.ts';
import { faultChange, faultOps } from './faults.ts';
import type { VehicleParams } from './params.ts';

export interface CompiledCar {
  params: VehicleParams;
  /** Changes with an onset or an intermittent pattern, in the faults' order; in force from the first state on their own schedule. */
  changes: CarChange[];
}

/** A fault present for the whole attempt. */
export const isPermanent = (f: Pick<Fault, 'onsetS' | 'intermittent'>): boolean => f.onsetS <= 0 && !(f.intermittent && f.intermittent.periodS > 0);

/**
 * Compiles a car: the permanent faults applied to the parameters (in list
 * order), the others as scheduled changes `c1`, `c2` … (in list order), and
 * the parameter set's label replaced by `label` (an author's label may name
 * the fault).
 */
export function compileCar(params: VehicleParams, faults: readonly Fault[], label: string): CompiledCar {
  let p: VehicleParams = { ...params, label };
  const changes: CarChange[] = [];
  for (const f of faults) {
    if (isPermanent(f)) p = applyOps(p, faultOps(f));
    else changes.push(faultChange(f, `c${changes.length + 1}`));
  }
  return { params: p, changes };
}
