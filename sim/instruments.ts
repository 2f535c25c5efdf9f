/**
 * The bench instruments, read from a state: the voltmeter between its red and
 * black leads (DC and AC ripple), the inductive clamp, the tachometer, the
 * series ammeter for the draw test, the pile tester's own ammeter, and status
 * lamps. `null` means "no reading" (a lead or the clamp not connected).
 * Plus the scope trace of the ripple and the output curve for the plot.
 *
 * Units are in the names: V, Vac (rms), A, rpm, Hz, C, s.
 */

import type { VehicleParams } from './params.ts';
import type { Fault } from './faults.ts';
import type { SimState, EngineStatus } from './step.ts';
import type { Controls } from './inputs.ts';

export interface Readings {
  /** DC volts, red minus black; negative with the leads reversed. */
  voltmeterV: number | null;
  /** AC ripple (rms) between the leads. */
  rippleVac: number | null;
  /** Frequency of the largest ripple component between the leads. */
  rippleHz: number | null;
  /** Inductive clamp, signed by its arrow, less its zero. */
  clampA: number | null;
  tachRpm: number;
  /** Series ammeter at the battery negative (draw test); positive is current leaving the battery. */
  ammeterA: number | null;
  /** The carbon-pile tester's own ammeter. */
  pileA: number;
  engine: EngineStatus;
  fusibleLinkOpen: boolean;
  pileTempC: number;
  pileOverheated: boolean;
  /** Heat band of the dial: amber above the pile's warning temperature. */
  pileHot: boolean;
  chargeWarning: boolean;
  batterySoc01: number;
  simTimeS: number;
}

export interface RippleTrace {
  /** Time between samples. */
  sampleIntervalS: number;
  /** AC-coupled volts between the leads, a few electrical cycles. */
  acV: number[];
  electricalHz: number;
}

export interface OutputCurvePoint {
  altRpm: number;
  currentA: number;
}

export function readMeters(params: VehicleParams, state: SimState): Readings {
  void params;
  void state;
  throw new Error('readMeters: not implemented yet');
}

export function rippleTrace(params: VehicleParams, state: SimState, samples: number): RippleTrace | null {
  void params;
  void state;
  void samples;
  throw new Error('rippleTrace: not implemented yet');
}

/** Net output at 13.5 V held at the B+ stud, full field, against alternator speed. */
export function outputCurve(params: VehicleParams, faults: readonly Fault[], options: { hot: boolean }): OutputCurvePoint[] {
  void params;
  void faults;
  void options;
  throw new Error('outputCurve: not implemented yet');
}

/** The clamp's reading before zeroing (what a clamp-zero event stores). */
export function rawClampReadingA(state: SimState, controls: Controls): number {
  void state;
  void controls;
  throw new Error('rawClampReadingA: not implemented yet');
}
