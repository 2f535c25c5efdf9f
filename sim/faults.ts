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
import { assertNever } from './assert-never.ts';

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
  /**
   * The tests whose reference procedure fails on a car with this fault, at
   * the severity the demo library uses (`librarySeverity01`), whatever else
   * the car is like.
   */
  revealedBy: DiagnosticTest[];
  /**
   * Tests the fault can make fail on some cars or after some history, but
   * not reliably: a drain that has flattened the battery overnight, an
   * undercharging regulator's low battery, a healthy harness carrying the
   * unregulated current of a unit stuck at full field.
   */
  mayAlsoFail: DiagnosticTest[];
  /** The severity the demo library uses for this kind, and the one the catalogue's claims are checked at. */
  librarySeverity01: number;
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
    description:
      'The link in the B+ cable has burnt open: the alternator still runs (the regulator excites its field) but no charge reaches the battery; the B+ stud sits high with heavy ripple.',
    severityMeaning: 'Not used (open is open).',
    revealedBy: ['regulated-voltage', 'output', 'voltage-drop-positive'],
    mayAlsoFail: ['battery-ocv'],
    librarySeverity01: 1,
  },
  'diode-open': {
    label: 'Open rectifier diode',
    description: 'One positive diode no longer conducts: heavy ripple at the electrical frequency; output only a little down at speed.',
    severityMeaning: 'Not used (one diode, phase A positive).',
    revealedBy: ['ripple'],
    mayAlsoFail: ['output'],
    librarySeverity01: 1,
  },
  'diode-shorted': {
    label: 'Shorted rectifier diode',
    description: 'One positive diode conducts both ways: output far down, heavy ripple, and a key-off drain through the unit.',
    severityMeaning: 'Key-off leakage through the unit: 0.1 A at 0 to 2 A at 1.',
    revealedBy: ['output', 'ripple', 'key-off-draw'],
    mayAlsoFail: ['regulated-voltage', 'battery-ocv', 'battery-load', 'cranking'],
    librarySeverity01: 0.4,
  },
  'stator-phase-open': {
    label: 'Open stator phase',
    description: 'One stator winding is broken: output well down, ripple at twice the electrical frequency.',
    severityMeaning: 'Not used.',
    revealedBy: ['output', 'ripple'],
    mayAlsoFail: [],
    librarySeverity01: 1,
  },
  'field-open': {
    label: 'Open field (worn brushes)',
    description: 'Worn brushes or a broken rotor winding: little or no field current, so little or no output and no ripple.',
    severityMeaning: 'Brush resistance: 0 adds 2 ohm, 0.5 adds about 60 ohm, 1 is open.',
    revealedBy: ['regulated-voltage', 'output'],
    mayAlsoFail: ['battery-ocv'],
    librarySeverity01: 1,
  },
  'regulator-set-high': {
    label: 'Regulator set high',
    description: 'The regulator holds too high a voltage: overcharging, a gassing battery, bulbs failing.',
    severityMeaning: 'Set point raised by 0.3 V at 0 to 2.0 V at 1.',
    revealedBy: ['regulated-voltage'],
    mayAlsoFail: [],
    librarySeverity01: 0.6,
  },
  'regulator-set-low': {
    label: 'Regulator set low',
    description: 'The regulator holds too low a voltage: the battery is never fully charged.',
    severityMeaning: 'Set point lowered by 0.3 V at 0 to 1.5 V at 1.',
    revealedBy: ['regulated-voltage'],
    mayAlsoFail: ['battery-ocv', 'battery-load', 'cranking'],
    librarySeverity01: 0.8,
  },
  'regulator-full-field': {
    label: 'Regulator stuck at full field',
    description:
      'The field driver is shorted on: the voltage climbs past 16 V with light loads and the battery gasses; held there long enough, the unit’s full output burns the fusible link open.',
    severityMeaning: 'Lowest field duty: 0.5 at 0 to 1 (full field) at 1.',
    revealedBy: ['regulated-voltage'],
    mayAlsoFail: ['voltage-drop-positive', 'voltage-drop-ground', 'ripple'],
    librarySeverity01: 1,
  },
  'belt-slip': {
    label: 'Belt slipping',
    description:
      'A glazed, stretched or loose belt: it creeps more under load and squeals, and once the grip is below the torque the loaded unit asks, the output falls far short while the tach reads normal.',
    severityMeaning: 'Grip reduced by 90 % x severity and creep raised 1 + 14 x severity times; the loaded output test falls short from about 0.9 on a typical car, and the belt squeals under heavy loads at idle from about 0.5.',
    revealedBy: ['output'],
    mayAlsoFail: ['regulated-voltage'],
    librarySeverity01: 0.95,
  },
  'bplus-high-resistance': {
    label: 'High resistance on the B+ side',
    description: 'A corroded B+ terminal or damaged charging cable: a large positive-side voltage drop under load.',
    severityMeaning: 'Extra resistance: 50 milliohm times severity (0.2 is 0.01 ohm).',
    revealedBy: ['voltage-drop-positive'],
    mayAlsoFail: ['regulated-voltage', 'output'],
    librarySeverity01: 0.4,
  },
  'ground-high-resistance': {
    label: 'High resistance on the ground side',
    description:
      'A corroded alternator mounting or case ground: a large ground-side drop under load, less field current (the field returns through the case) and an undercharged battery.',
    severityMeaning: 'Extra resistance between case and engine: 50 milliohm times severity.',
    revealedBy: ['voltage-drop-ground', 'regulated-voltage'],
    mayAlsoFail: ['output', 'battery-ocv'],
    librarySeverity01: 0.5,
  },
  'battery-weak': {
    label: 'Weak (sulfated) battery',
    description:
      'A sulfated battery: much higher internal resistance, less capacity and acid locked in the plates, so it rests low even when charged, fails the load test and cranks poorly.',
    severityMeaning: 'Internal resistance times 2.8 + 4 x severity (fails the load test at any severity); capacity times 1 - 0.6 x severity; sulfation 0.2 + 0.6 x severity.',
    revealedBy: ['battery-load', 'cranking', 'battery-ocv'],
    mayAlsoFail: [],
    librarySeverity01: 0.7,
  },
  'key-off-draw': {
    label: 'Excessive key-off draw',
    description: 'An accessory stays on with the key off and drains the battery overnight.',
    severityMeaning: 'Stuck load: 0.05 A at 0 to 1 A (a lamp) at 1.',
    revealedBy: ['key-off-draw'],
    mayAlsoFail: ['battery-ocv', 'battery-load', 'cranking'],
    librarySeverity01: 0.3,
  },
  'wrong-rating': {
    label: 'Wrong alternator rating fitted',
    description: 'A lower-rated unit was fitted: it works but cannot reach the car’s specified output.',
    severityMeaning: 'Fitted unit rated 1 - 0.5 x severity of the specified rating (severity 0.67: a 100 A unit in a 150 A car).',
    revealedBy: ['output'],
    mayAlsoFail: [],
    librarySeverity01: 0.4,
  },
  'post-corroded': {
    label: 'Corroded battery post',
    description:
      'Corrosion between the positive post and its clamp: a drop across the post connection under load, slow cranking, and from about 0.3 no start at all (the post itself still reads a good battery).',
    severityMeaning: 'Post-to-clamp resistance: 100 milliohm times severity.',
    revealedBy: ['voltage-drop-positive'],
    mayAlsoFail: ['cranking'],
    librarySeverity01: 0.12,
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
      // A glazed, stretched or loose belt: less grip, more creep under load (see docs/model.md, "Belt").
      return [
        { path: 'belt.gripNm', op: 'mul', value: 1 - 0.9 * s },
        { path: 'belt.creep01', op: 'mul', value: 1 + 14 * s },
      ];
    case 'bplus-high-resistance':
      return [{ path: 'wiring.bplusExtraOhm', op: 'add', value: 0.05 * s }];
    case 'ground-high-resistance':
      return [{ path: 'wiring.groundExtraOhm', op: 'add', value: 0.05 * s }];
    case 'battery-weak':
      // Sulfation: resistance up enough to fail the half-CCA load test at any severity, capacity down, acid locked in the plates.
      return [
        { path: 'battery.internalResistanceOhmAt25C', op: 'mul', value: 2.8 + 4 * s },
        { path: 'battery.capacityAh', op: 'mul', value: 1 - 0.6 * s },
        { path: 'battery.sulfation01', op: 'add', value: 0.2 },
        { path: 'battery.sulfation01', op: 'add', value: 0.6 * s },
        { path: 'battery.sulfation01', op: 'min', value: 1 },
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
      return assertNever(fault.kind, 'fault kind');
  }
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
