/**
 * Faults as transforms of component parameters. A fault has a kind, a
 * severity 0..1, an onset in sim seconds and an optional intermittent
 * pattern; `faultOps` writes its transform as operations on the parameters
 * (car-changes.ts) and `applyFaults` turns the healthy parameters into the
 * effective ones at a moment. Several faults combine: each transform is
 * applied in turn, so two resistive faults add and a weak battery with a
 * stuck draw is both.
 *
 * The model itself runs changes, not faults: a fault becomes a change
 * (`faultChange`) with its operations and schedule but no kind, so a car can
 * be handed to the bench without its fault list (compiled-car.ts).
 */

import type { VehicleParams } from './params.ts';
import type { CarChange, IntermittentPattern, ParamOp } from './car-changes.ts';
import { applyOps, isScheduledActive } from './car-changes.ts';

export type { IntermittentPattern };

export type FaultKind =
  | 'fusible-link-open'
  | 'diode-open'
  | 'diode-shorted'
  | 'stator-phase-open'
  | 'field-open'
  | 'regulator-set-high'
  | 'regulator-set-low'
  | 'regulator-full-field'
  | 'belt-slip'
  | 'bplus-high-resistance'
  | 'ground-high-resistance'
  | 'battery-weak'
  | 'key-off-draw'
  | 'wrong-rating'
  | 'post-corroded';

export interface Fault {
  id: string;
  kind: FaultKind;
  severity01: number;
  /** Sim time at which the fault appears. */
  onsetS: number;
  intermittent?: IntermittentPattern | null;
}

/** The bench tests an instructor can expect to reveal a fault. */
export type DiagnosticTest =
  | 'battery-ocv'
  | 'battery-load'
  | 'regulated-voltage'
  | 'output'
  | 'voltage-drop-positive'
  | 'voltage-drop-ground'
  | 'ripple'
  | 'key-off-draw'
  | 'cranking';

export interface FaultCatalogEntry {
  label: string;
  /** One line for instructors: what is wrong in the car. */
  description: string;
  /** What severity 0..1 means for this kind. */
  severityMeaning: string;
  revealedBy: DiagnosticTest[];
}

export const FAULT_KINDS: readonly FaultKind[] = [
  'fusible-link-open',
  'diode-open',
  'diode-shorted',
  'stator-phase-open',
  'field-open',
  'regulator-set-high',
  'regulator-set-low',
  'regulator-full-field',
  'belt-slip',
  'bplus-high-resistance',
  'ground-high-resistance',
  'battery-weak',
  'key-off-draw',
  'wrong-rating',
  'post-corroded',
];

export const FAULT_CATALOG: Readonly<Record<FaultKind, FaultCatalogEntry>> = {
  'fusible-link-open': {
    label: 'Fusible link open',
    description: 'The link in the B+ cable has burnt open: no charge reaches the battery.',
    severityMeaning: 'Not used (open is open).',
    revealedBy: ['regulated-voltage', 'output', 'voltage-drop-positive', 'ripple'],
  },
  'diode-open': {
    label: 'Open rectifier diode',
    description: 'One positive diode no longer conducts: heavy ripple at the electrical frequency; output only a little down.',
    severityMeaning: 'Not used (one diode, phase A positive).',
    revealedBy: ['output', 'ripple'],
  },
  'diode-shorted': {
    label: 'Shorted rectifier diode',
    description: 'One positive diode conducts both ways: output far down, heavy ripple, and a key-off drain through the unit.',
    severityMeaning: 'Key-off leakage through the unit: 0.1 A at 0 to 2 A at 1.',
    revealedBy: ['output', 'ripple', 'key-off-draw'],
  },
  'stator-phase-open': {
    label: 'Open stator phase',
    description: 'One stator winding is broken: output down to about two thirds, ripple at twice the electrical frequency.',
    severityMeaning: 'Not used.',
    revealedBy: ['output', 'ripple'],
  },
  'field-open': {
    label: 'Open field (worn brushes)',
    description: 'Worn brushes or a broken rotor winding: little or no field current, so little or no output and no ripple.',
    severityMeaning: 'Brush resistance: 0 adds 2 ohm, 0.5 adds about 60 ohm, 1 is open.',
    revealedBy: ['regulated-voltage', 'output'],
  },
  'regulator-set-high': {
    label: 'Regulator set high',
    description: 'The regulator holds too high a voltage: overcharging, boiling battery, bulbs failing.',
    severityMeaning: 'Set point raised by 0.3 V at 0 to 2.0 V at 1.',
    revealedBy: ['regulated-voltage'],
  },
  'regulator-set-low': {
    label: 'Regulator set low',
    description: 'The regulator holds too low a voltage: the battery is never fully charged.',
    severityMeaning: 'Set point lowered by 0.3 V at 0 to 1.5 V at 1.',
    revealedBy: ['regulated-voltage', 'battery-ocv'],
  },
  'regulator-full-field': {
    label: 'Regulator stuck at full field',
    description: 'The field driver is shorted on: the voltage climbs with speed, above 16 V with light loads.',
    severityMeaning: 'Lowest field duty: 0.5 at 0 to 1 (full field) at 1.',
    revealedBy: ['regulated-voltage'],
  },
  'belt-slip': {
    label: 'Belt slipping',
    description: 'A glazed or loose belt slips under load: output falls off when the load rises, often with a squeal.',
    severityMeaning: 'Belt grip reduced by 30 % at 0 to 90 % at 1.',
    revealedBy: ['output'],
  },
  'bplus-high-resistance': {
    label: 'High resistance on the B+ side',
    description: 'A corroded B+ terminal or damaged charging cable: a large positive-side voltage drop under load.',
    severityMeaning: 'Extra resistance: 50 milliohm times severity (0.2 is 0.01 ohm).',
    revealedBy: ['voltage-drop-positive'],
  },
  'ground-high-resistance': {
    label: 'High resistance on the ground side',
    description: 'A corroded alternator mounting or case ground: a large ground-side drop under load, an undercharged battery.',
    severityMeaning: 'Extra resistance between case and engine: 50 milliohm times severity.',
    revealedBy: ['voltage-drop-ground', 'regulated-voltage'],
  },
  'battery-weak': {
    label: 'Weak (sulfated) battery',
    description: 'A sulfated battery: lower capacity and much higher internal resistance; fails the load test.',
    severityMeaning: 'Internal resistance times 1 + 4 x severity; capacity times 1 - 0.75 x severity.',
    revealedBy: ['battery-load', 'cranking', 'battery-ocv'],
  },
  'key-off-draw': {
    label: 'Excessive key-off draw',
    description: 'An accessory stays on with the key off and drains the battery overnight.',
    severityMeaning: 'Stuck load: 0.05 A at 0 to 1 A (a lamp) at 1.',
    revealedBy: ['key-off-draw', 'battery-ocv'],
  },
  'wrong-rating': {
    label: 'Wrong alternator rating fitted',
    description: 'A lower-rated unit was fitted: it works but cannot reach the car’s specified output.',
    severityMeaning: 'Fitted unit rated 1 - 0.5 x severity of the specified rating (severity 0.67: a 100 A unit in a 150 A car).',
    revealedBy: ['output'],
  },
  'post-corroded': {
    label: 'Corroded battery post',
    description: 'Corrosion between the positive post and its clamp: hard starting, low charge, drop across the clamp.',
    severityMeaning: 'Post-to-clamp resistance: 100 milliohm times severity.',
    revealedBy: ['cranking', 'voltage-drop-positive', 'battery-load'],
  },
};

/** Whether a fault is present at the given sim time. */
export function isFaultActive(fault: Fault, timeS: number): boolean {
  return isScheduledActive(fault, timeS);
}

function clamp01(x: number): number {
  return x < 0 ? 0 : x > 1 ? 1 : x;
}

/**
 * One fault's transform as operations on the parameters (applied in order;
 * see car-changes.ts). Written term by term as the arithmetic of the
 * transform, so the parameters come out bit for bit the same.
 */
export function faultOps(fault: Pick<Fault, 'kind' | 'severity01'>): ParamOp[] {
  const s = clamp01(fault.severity01);
  switch (fault.kind) {
    case 'fusible-link-open':
      return [{ path: 'wiring.fusibleLinkOpen', op: 'set', value: true }];
    case 'diode-open':
      return [{ path: 'alternator.openDiodes', op: 'include', value: 0 }];
    case 'diode-shorted':
      return [
        { path: 'alternator.shortedDiodes', op: 'include', value: 0 },
        { path: 'alternator.keyOffLeakageA', op: 'add', value: 0.1 },
        { path: 'alternator.keyOffLeakageA', op: 'add', value: 1.9 * s },
      ];
    case 'stator-phase-open':
      return [{ path: 'alternator.openPhases', op: 'include', value: 0 }];
    case 'field-open':
      return [{ path: 'alternator.brushResistanceOhm', op: 'add', value: s >= 1 ? 1e6 : 2 + 240 * s * s }];
    case 'regulator-set-high':
      return [
        { path: 'regulator.setPointVAt25C', op: 'add', value: 0.3 },
        { path: 'regulator.setPointVAt25C', op: 'add', value: 1.7 * s },
      ];
    case 'regulator-set-low':
      // x - y is x + (-y) exactly.
      return [{ path: 'regulator.setPointVAt25C', op: 'add', value: -(0.3 + 1.2 * s) }];
    case 'regulator-full-field':
      return [{ path: 'regulator.dutyFloor01', op: 'max', value: 0.5 + 0.5 * s }];
    case 'belt-slip':
      return [{ path: 'belt.gripNm', op: 'mul', value: 1 - (0.3 + 0.6 * s) }];
    case 'bplus-high-resistance':
      return [{ path: 'wiring.bplusExtraOhm', op: 'add', value: 0.05 * s }];
    case 'ground-high-resistance':
      return [{ path: 'wiring.groundExtraOhm', op: 'add', value: 0.05 * s }];
    case 'battery-weak':
      return [
        { path: 'battery.internalResistanceOhmAt25C', op: 'mul', value: 1 + 4 * s },
        { path: 'battery.capacityAh', op: 'mul', value: 1 - 0.75 * s },
      ];
    case 'key-off-draw':
      return [
        { path: 'loads.stuckDrawA', op: 'add', value: 0.05 },
        { path: 'loads.stuckDrawA', op: 'add', value: 0.95 * s },
      ];
    case 'wrong-rating': {
      // A smaller unit of the same family: less copper and iron, so higher
      // impedance in proportion (output limit ~ EMF / reactance).
      const k = 1 - 0.5 * s;
      return [
        { path: 'alternator.ratedCurrentA', op: 'mul', value: k },
        { path: 'alternator.synchronousInductanceH', op: 'div', value: k },
        { path: 'alternator.statorResistanceOhmAt20C', op: 'div', value: k },
      ];
    }
    case 'post-corroded':
      return [{ path: 'wiring.postClampPosOhm', op: 'add', value: 0.1 * s }];
    default:
      return assertNever(fault.kind);
  }
}

function assertNever(x: never): never {
  throw new Error(`Unknown fault kind: ${String(x)}`);
}

/** A fault as a change of the car: its schedule and its operations, under the given (opaque) id. */
export function faultChange(fault: Fault, id: string = fault.id): CarChange {
  return { id, onsetS: fault.onsetS, intermittent: fault.intermittent ?? null, ops: faultOps(fault) };
}

/**
 * The effective parameters at `timeS` with every fault that is present then.
 * Pure: returns `params` itself when no fault is active.
 */
export function applyFaults(params: VehicleParams, faults: readonly Fault[], timeS: number): VehicleParams {
  let p = params;
  for (const fault of faults) {
    if (isFaultActive(fault, timeS)) p = applyOps(p, faultOps(fault));
  }
  return p;
}
