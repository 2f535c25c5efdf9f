/**
 * The bench's input events and the controls they set. An attempt's event log
 * is a list of these, ordered by `atMs` (integer sim milliseconds); an event
 * takes effect before the first step whose start time is >= its `atMs`, and
 * events with the same `atMs` apply in log order.
 *
 * Controls are what the events have set so far: the key, the rpm the
 * assistant holds, switches, the pile dial, where the leads and the clamp
 * are, and the changes of the car in force (its schedule, and any applied
 * since). A `fault-inject` is the same as a `change-apply` of the fault's
 * change (faults.ts `faultChange`): tests and reference runs may speak of
 * faults, the bench and the server's log speak of changes only.
 */

import type { CarChange } from './car-changes.ts';
import type { Fault } from './faults.ts';
import { faultChange } from './faults.ts';
import { assertNever } from './assert-never.ts';

/** Where a voltmeter lead can be clipped. */
export type ConnectionPoint =
  | 'battery-pos'
  | 'battery-neg'
  | 'jump-pos'
  | 'jump-neg'
  | 'alt-bplus'
  | 'alt-case'
  | 'engine-ground'
  | 'chassis';

export const CONNECTION_POINTS: readonly ConnectionPoint[] = [
  'battery-pos',
  'battery-neg',
  'jump-pos',
  'jump-neg',
  'alt-bplus',
  'alt-case',
  'engine-ground',
  'chassis',
];

/** What the inductive clamp can enclose. */
export type Conductor = 'bplus-cable' | 'battery-pos-cable' | 'battery-neg-cable' | 'ground-strap' | 'sense-line';

export const CONDUCTORS: readonly Conductor[] = [
  'bplus-cable',
  'battery-pos-cable',
  'battery-neg-cable',
  'ground-strap',
  'sense-line',
];

export type KeyPosition = 'off' | 'on' | 'start';
export type LeadColour = 'red' | 'black';
/** The arrow on the clamp jaw: conventional current in that direction reads positive. */
export type ClampArrow = 'toward-battery' | 'toward-alternator';

export type InputEvent =
  | { kind: 'key'; atMs: number; position: KeyPosition }
  | { kind: 'rpm'; atMs: number; rpm: number }
  | { kind: 'accessory'; atMs: number; id: string; on: boolean }
  | { kind: 'pile'; atMs: number; dial01: number }
  | { kind: 'lead'; atMs: number; which: LeadColour; point: ConnectionPoint | null }
  | { kind: 'clamp'; atMs: number; conductor: Conductor | null; arrow: ClampArrow }
  | { kind: 'clamp-zero'; atMs: number }
  | { kind: 'ammeter'; atMs: number; inSeries: boolean }
  /** A new fuse in the series ammeter (its 10 A range fuse blew). */
  | { kind: 'ammeter-fuse'; atMs: number }
  | { kind: 'bplus-disconnect'; atMs: number; connected: boolean }
  | { kind: 'change-apply'; atMs: number; change: CarChange }
  | { kind: 'change-clear'; atMs: number; changeId: string }
  | { kind: 'fault-inject'; atMs: number; fault: Fault }
  | { kind: 'fault-clear'; atMs: number; faultId: string };

export type InputKind = InputEvent['kind'];

export interface Controls {
  key: KeyPosition;
  /** The rpm the assistant holds; at or below idle the engine idles. */
  heldRpm: number;
  /** Ids of the accessories switched on, sorted. */
  accessoriesOn: string[];
  pileDial01: number;
  leads: { red: ConnectionPoint | null; black: ConnectionPoint | null };
  clamp: { conductor: Conductor | null; arrow: ClampArrow };
  /** Subtracted from the clamp's raw reading; set by clamp-zero. */
  clampZeroA: number;
  /** The last clamp-zero was taken with the jaws around no conductor (false before any). */
  clampZeroAway: boolean;
  /** Series ammeter between the battery negative post and its cable. */
  ammeterInSeries: boolean;
  /** How many times the ammeter's fuse has been replaced (each replacement fits a good fuse). */
  ammeterFusesFitted: number;
  /** The B+ lead at the alternator stud (false: removed to isolate a drain). */
  bplusConnected: boolean;
  /** The car's changes in force or scheduled, in the order they came. */
  changes: CarChange[];
}

export function initialControls(): Controls {
  return {
    key: 'off',
    heldRpm: 0,
    accessoriesOn: [],
    pileDial01: 0,
    leads: { red: null, black: null },
    clamp: { conductor: null, arrow: 'toward-battery' },
    clampZeroA: 0,
    clampZeroAway: false,
    ammeterInSeries: false,
    ammeterFusesFitted: 0,
    bplusConnected: true,
    changes: [],
  };
}

function clamp01(x: number): number {
  return Number.isFinite(x) ? (x < 0 ? 0 : x > 1 ? 1 : x) : 0;
}

/**
 * Controls after one event. `rawClampA` is the clamp's reading before zeroing
 * at this moment (the clamp-zero event stores it); pass it from the
 * instruments (`rawClampReadingA`). Pure: `controls` is not changed.
 */
export function applyInput(controls: Controls, event: InputEvent, rawClampA: number): Controls {
  switch (event.kind) {
    case 'key':
      return { ...controls, key: event.position };
    case 'rpm':
      return { ...controls, heldRpm: Number.isFinite(event.rpm) ? Math.max(0, event.rpm) : 0 };
    case 'accessory': {
      const others = controls.accessoriesOn.filter((id) => id !== event.id);
      return { ...controls, accessoriesOn: event.on ? [...others, event.id].sort() : others };
    }
    case 'pile':
      return { ...controls, pileDial01: clamp01(event.dial01) };
    case 'lead':
      return { ...controls, leads: { ...controls.leads, [event.which]: event.point } };
    case 'clamp':
      return { ...controls, clamp: { conductor: event.conductor, arrow: event.arrow } };
    case 'clamp-zero':
      return { ...controls, clampZeroA: rawClampA, clampZeroAway: controls.clamp.conductor === null };
    case 'ammeter':
      return { ...controls, ammeterInSeries: event.inSeries };
    case 'ammeter-fuse':
      return { ...controls, ammeterFusesFitted: controls.ammeterFusesFitted + 1 };
    case 'bplus-disconnect':
      return { ...controls, bplusConnected: event.connected };
    case 'change-apply':
      return withChange(controls, event.change);
    case 'change-clear':
      return { ...controls, changes: controls.changes.filter((c) => c.id !== event.changeId) };
    case 'fault-inject':
      return withChange(controls, faultChange(event.fault));
    case 'fault-clear':
      return { ...controls, changes: controls.changes.filter((c) => c.id !== event.faultId) };
    default:
      return assertNever(event, 'input event');
  }
}

/** A change added last, replacing one of the same id. */
function withChange(controls: Controls, change: CarChange): Controls {
  return { ...controls, changes: [...controls.changes.filter((c) => c.id !== change.id), change] };
}
