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

/** What the model claims of a fault kind (its words for people: shared/fault-catalogue-text.ts). */
export interface FaultCatalogEntry {
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
    revealedBy: ['regulated-voltage', 'output', 'voltage-drop-positive'],
    mayAlsoFail: ['battery-ocv'],
    librarySeverity01: 1,
  },
  'diode-open': {
    revealedBy: ['ripple'],
    mayAlsoFail: ['output'],
    librarySeverity01: 1,
  },
  'diode-shorted': {
    revealedBy: ['output', 'ripple', 'key-off-draw'],
    mayAlsoFail: ['regulated-voltage', 'battery-ocv', 'battery-load', 'cranking'],
    librarySeverity01: 0.4,
  },
  'stator-phase-open': {
    revealedBy: ['output', 'ripple'],
    mayAlsoFail: [],
    librarySeverity01: 1,
  },
  'field-open': {
    revealedBy: ['regulated-voltage', 'output'],
    mayAlsoFail: ['battery-ocv'],
    librarySeverity01: 1,
  },
  'regulator-set-high': {
    revealedBy: ['regulated-voltage'],
    mayAlsoFail: [],
    librarySeverity01: 0.6,
  },
  'regulator-set-low': {
    revealedBy: ['regulated-voltage'],
    mayAlsoFail: ['battery-ocv', 'battery-load', 'cranking'],
    librarySeverity01: 0.8,
  },
  'regulator-full-field': {
    revealedBy: ['regulated-voltage'],
    mayAlsoFail: ['voltage-drop-positive', 'voltage-drop-ground', 'ripple'],
    librarySeverity01: 1,
  },
  'belt-slip': {
    revealedBy: ['output'],
    mayAlsoFail: ['regulated-voltage'],
    librarySeverity01: 0.95,
  },
  'bplus-high-resistance': {
    revealedBy: ['voltage-drop-positive'],
    mayAlsoFail: ['regulated-voltage', 'output'],
    librarySeverity01: 0.4,
  },
  'ground-high-resistance': {
    revealedBy: ['voltage-drop-ground', 'regulated-voltage'],
    mayAlsoFail: ['output', 'battery-ocv'],
    librarySeverity01: 0.5,
  },
  'battery-weak': {
    revealedBy: ['battery-load', 'cranking', 'battery-ocv'],
    mayAlsoFail: [],
    librarySeverity01: 0.7,
  },
  'key-off-draw': {
    revealedBy: ['key-off-draw'],
    mayAlsoFail: ['battery-ocv', 'battery-load', 'cranking'],
    librarySeverity01: 0.3,
  },
  'wrong-rating': {
    revealedBy: ['output'],
    mayAlsoFail: [],
    librarySeverity01: 0.4,
  },
  'post-corroded': {
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
