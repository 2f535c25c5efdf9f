/**
 * The bench instruments, read from a state: the voltmeter between its red and
 * black leads (DC and AC ripple), the inductive clamp, the tachometer, the
 * series ammeter for the draw test, the pile tester's own ammeter, and status
 * lamps. `null` means "no reading" (a lead or the clamp not connected).
 * Plus the scope trace of the ripple and the output curve for the plot.
 *
 * The instruments compute no physics of their own: they read the network the
 * step solved (node voltages, branch currents, AC transfer resistances).
 *
 * Units are in the names: V, Vac (rms), A, rpm, Hz, C, s.
 */

import type { VehicleParams } from './params.ts';
import type { CarChange } from './car-changes.ts';
import type { SimState, EngineStatus, EngineStopCause } from './step.ts';
import type { Controls, Conductor, ConnectionPoint } from './inputs.ts';
import type { NodeName, NetworkSolution } from './network.ts';
import { COLD_ALTERNATOR_C, CURVE_TEST_V, FIELD_DRIVER_DROP_V, HOT_ALTERNATOR_C, copperAt, effectiveModel, fieldResistanceOhm, fluxWithStatorDc } from './model.ts';
import type { BridgePoint } from './bridge.ts';
import { bridgeOperatingPoint, diodeDropV, periodicBridge } from './bridge.ts';
import { assertNever } from './assert-never.ts';

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
  /** Why the engine will not crank or stopped (null while nothing is wrong). */
  engineStopCause: EngineStopCause | null;
  /** The series ammeter's fuse has blown (it reads nothing and breaks the battery circuit until a new fuse is fitted). */
  ammeterFuseBlown: boolean;
  /** The series ammeter carries more than its 10 A range. */
  ammeterOverRange: boolean;
  /** The belt slips enough to squeal. */
  beltSquealing: boolean;
  /** The battery is gassing (overcharged): hydrogen and oxygen, explosive near a spark. */
  batteryGassing: boolean;
  fusibleLinkOpen: boolean;
  pileTempC: number;
  /** The pile's thermal cut-out has opened (turn the dial to zero and let it cool). */
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
  /** AC-coupled volts between the leads over a few electrical cycles. */
  acV: number[];
  electricalHz: number;
}

export interface OutputCurvePoint {
  altRpm: number;
  currentA: number;
}

export const CONNECTION_NODE: Readonly<Record<ConnectionPoint, NodeName>> = {
  'battery-pos': 'batteryPos',
  'battery-neg': 'batteryNeg',
  'jump-pos': 'junction',
  'jump-neg': 'chassis',
  'alt-bplus': 'bplus',
  'alt-case': 'altCase',
  'engine-ground': 'engine',
  chassis: 'chassis',
};

/** The series ammeter's range (its fuse is AMMETER_FUSE_A). */
export const AMMETER_RANGE_A = 10;
/** Gassing current above which the battery visibly bubbles and gives off gas. */
const GASSING_SHOWN_A = 2;

/** Ignition and injector noise on any DC reading with the engine running. */
const RUNNING_NOISE_FLOOR_VAC = 0.004;

/** Current in a conductor, positive toward the battery. */
export function conductorCurrentTowardBatteryA(net: NetworkSolution, conductor: Conductor): number {
  switch (conductor) {
    case 'bplus-cable':
      return net.branchA.bplusCable;
    case 'battery-pos-cable':
      return -net.branchA.posCable;
    case 'battery-neg-cable':
      return net.branchA.negCable;
    case 'ground-strap':
      return -net.branchA.strap;
    case 'sense-line':
      return 0;
    default:
      return assertNever(conductor, 'conductor');
  }
}

/** The clamp's reading before zeroing (what a clamp-zero event stores). */
export function rawClampReadingA(state: SimState, controls: Controls): number {
  const conductor = controls.clamp.conductor;
  // The offset belongs to the clamp as it sits now; a clamp just moved gets its new offset at the next step.
  const offset = state.clampOffsetA;
  if (conductor === null) return offset;
  const i = conductorCurrentTowardBatteryA(state.net, conductor);
  return offset + (controls.clamp.arrow === 'toward-battery' ? i : -i);
}

export function readMeters(params: VehicleParams, state: SimState, controls: Controls = state.controls): Readings {
  const net = state.net;
  const { red, black } = controls.leads;
  let voltmeterV: number | null = null;
  let rippleVac: number | null = null;
  let rippleHz: number | null = null;
  const running = state.engineStatus === 'running';
  if (red !== null && black !== null) {
    const a = CONNECTION_NODE[red];
    const b = CONNECTION_NODE[black];
    voltmeterV = net.nodeV[a] - net.nodeV[b];
    const transfer = Math.abs(net.rippleOhm[a] - net.rippleOhm[b]);
    const ac = net.rippleCurrentRmsA * transfer;
    rippleVac = ac + (running && a !== b ? RUNNING_NOISE_FLOOR_VAC : 0);
    const electricalHz = (params.alternator.polePairs * state.altRpm) / 60;
    rippleHz = ac > 1e-4 && electricalHz > 0 ? net.rippleHarmonic * electricalHz : null;
  }
  const clampA = controls.clamp.conductor === null ? null : rawClampReadingA(state, controls) - controls.clampZeroA;
  const ammeterA = controls.ammeterInSeries ? (state.ammeterFuseBlown ? 0 : net.branchA.negCable) : null;
  return {
    voltmeterV,
    rippleVac,
    rippleHz,
    clampA,
    tachRpm: Math.round(state.engineRpm),
    ammeterA,
    pileA: net.branchA.pile,
    engine: state.engineStatus,
    engineStopCause: state.engineStopCause,
    ammeterFuseBlown: state.ammeterFuseBlown,
    ammeterOverRange: ammeterA !== null && Math.abs(ammeterA) > AMMETER_RANGE_A,
    beltSquealing: state.beltSlipping,
    batteryGassing: state.batteryGassingA > GASSING_SHOWN_A,
    fusibleLinkOpen: state.fusibleLinkBlown || linkOpenByFault(params, state),
    pileTempC: state.pileTempC,
    pileOverheated: state.pileTripped,
    pileHot: state.pileTempC >= params.pile.warnC,
    chargeWarning: state.chargeWarning,
    batterySoc01: state.batterySoc01,
    simTimeS: state.timeMs / 1000,
  };
}

/** A link that a fault (or the scenario) has open at this moment. */
function linkOpenByFault(params: VehicleParams, state: SimState): boolean {
  return effectiveModel(params, state.controls.changes, state.timeMs / 1000).p.wiring.fusibleLinkOpen;
}

/** The electrical operating point of the bridge in a state (shared with the rectifier circuit). */
export function bridgeOperatingInputs(params: VehicleParams, state: SimState) {
  const m = effectiveModel(params, state.controls.changes, state.timeMs / 1000);
  const a = m.p.alternator;
  const omegaE = (2 * Math.PI * a.polePairs * state.altRpm) / 60;
  const emfPeakV = m.emfConstantVsPerRad * omegaE * fluxWithStatorDc(m, state.fieldCurrentA, state.net.statorDcA);
  const net = state.net;
  const dcResistanceOhm = net.rippleOhm.bplus - net.rippleOhm.altCase;
  const portV = net.nodeV.bplus - net.nodeV.altCase;
  return {
    model: m,
    omegaE,
    electricalHz: omegaE / (2 * Math.PI),
    emfPeakV,
    statorResistanceOhm: copperAt(a.statorResistanceOhmAt20C, state.alternatorTempC),
    dcResistanceOhm,
    dcTheveninV: portV - dcResistanceOhm * net.bridgeCurrentA,
  };
}

/**
 * A scope-like trace: the AC part of the voltage between the leads over
 * three electrical cycles, from one periodic solution of the bridge at the
 * present operating point. Null when the leads are not both on or the
 * alternator is not turning.
 */
export function rippleTrace(params: VehicleParams, state: SimState, samples: number): RippleTrace | null {
  const { red, black } = state.controls.leads;
  if (red === null || black === null) return null;
  const op = bridgeOperatingInputs(params, state);
  if (!(op.electricalHz > 1) || !(op.emfPeakV > 0)) return null;
  const a = op.model.p.alternator;
  const cycles = 3;
  const perCycle = Math.max(24, Math.ceil(samples / cycles));
  const transfer = state.net.rippleOhm[CONNECTION_NODE[red]] - state.net.rippleOhm[CONNECTION_NODE[black]];
  const diode = { saturationCurrentA: a.diodeSaturationCurrentA, emissionCoefficient: a.diodeEmissionCoefficient };
  const res = periodicBridge({
    topology: op.model.topology,
    emfPeakV: op.emfPeakV,
    omegaRadS: op.omegaE,
    inductanceH: a.synchronousInductanceH,
    phaseResistanceOhm: op.statorResistanceOhm + a.diodeSeriesResistanceOhm,
    diodeDropV: diodeDropV(diode, state.net.bridgeCurrentA),
    dcTheveninV: op.dcTheveninV,
    dcResistanceOhm: op.dcResistanceOhm,
    stepsPerCycle: perCycle,
  });
  // The waveform's shape from the periodic solution, its size what the meter reads between the leads (see readMeters).
  let sq = 0;
  for (let s = 0; s < perCycle; s++) sq += (res.waveformA[s]! - res.meanA) ** 2;
  const rms = Math.sqrt(sq / perCycle);
  // The AC current that reaches the network already carries the share a B+ cut off from the battery leaves it.
  const wantRms = state.net.rippleCurrentRmsA * Math.abs(transfer);
  const k = rms > 1e-12 ? (wantRms / rms) * Math.sign(transfer) : 0;
  const acV: number[] = [];
  for (let c = 0; c < cycles; c++) {
    for (let s = 0; s < perCycle; s++) acV.push((res.waveformA[s]! - res.meanA) * k);
  }
  return { sampleIntervalS: 1 / op.electricalHz / perCycle, acV, electricalHz: op.electricalHz };
}

const CURVE_MAX_ALT_RPM = 12000;
const CURVE_STEP_ALT_RPM = 100;
/** Most passes of the flux against the stator's DC current at one speed (see outputAtSpeed). */
const STATOR_DC_PASSES = 8;

/**
 * The output available at 13.5 V held at the B+ stud against alternator
 * speed, full field, net of the field's own supply: what an output-curve
 * test stand measures. The changes (faults.ts `faultChange` of a car's
 * faults) apply in full, onsets and intermittency aside.
 */
export function outputCurve(params: VehicleParams, changes: readonly CarChange[], options: { hot: boolean }): OutputCurvePoint[] {
  const at = outputAtSpeed(params, changes, options);
  const points: OutputCurvePoint[] = [];
  for (let rpm = 0; rpm <= CURVE_MAX_ALT_RPM; rpm += CURVE_STEP_ALT_RPM) points.push({ altRpm: rpm, currentA: at(rpm) });
  return points;
}

/**
 * The test stand's output at any alternator speed (see outputCurve), as a
 * function of the speed; successive calls at nearby speeds start from the
 * last answer.
 */
export function outputAtSpeed(params: VehicleParams, changes: readonly CarChange[], options: { hot: boolean }): (altRpm: number) => number {
  const steady = changes.map((c) => ({ ...c, onsetS: 0, intermittent: null }));
  const m = effectiveModel(params, steady, 0);
  const a = m.p.alternator;
  const tempC = options.hot ? HOT_ALTERNATOR_C : COLD_ALTERNATOR_C;
  const fieldA = Math.max(0, (CURVE_TEST_V - FIELD_DRIVER_DROP_V) / fieldResistanceOhm(m, tempC));
  const rPhase = copperAt(a.statorResistanceOhmAt20C, tempC) + a.diodeSeriesResistanceOhm;
  const diode = { saturationCurrentA: a.diodeSaturationCurrentA, emissionCoefficient: a.diodeEmissionCoefficient };
  const out: BridgePoint = { meanA: 0, acRmsA: 0, dominantHarmonic: 6, dcV: 0, phaseSquaresA2: 0, statorDcA: 0 };
  let guess = 0;
  let statorDcA = 0;
  return (rpm: number) => {
    const omegaE = (2 * Math.PI * a.polePairs * rpm) / 60;
    // The flux depends on the stator's DC current, which depends on the flux: a few passes settle it (a healthy
    // bridge has none, and one pass).
    for (let pass = 0; pass < STATOR_DC_PASSES; pass++) {
      bridgeOperatingPoint(
        {
          table: m.table,
          emfPeakV: m.emfConstantVsPerRad * omegaE * fluxWithStatorDc(m, fieldA, statorDcA),
          reactanceOhm: omegaE * a.synchronousInductanceH,
          phaseResistanceOhm: rPhase,
          diode,
          dcTheveninV: CURVE_TEST_V,
          dcResistanceOhm: 0,
          guessA: guess,
        },
        out,
      );
      guess = out.meanA;
      const settled = Math.abs(out.statorDcA - statorDcA) <= 1e-3 * (1 + statorDcA);
      statorDcA = out.statorDcA;
      if (settled) break;
    }
    guess = out.meanA;
    return Math.max(0, out.meanA - fieldA);
  };
}

/** Where a faulted unit's output curve lies above the healthy one: the speeds it spans and the most it gives above. */
export interface CurveExcess {
  fromAltRpm: number;
  toAltRpm: number;
  mostA: number;
}

/**
 * The stretch of speeds where `faulted` gives more than `marginA` above
 * `healthy` (the two compared at the speeds both hold), or null. A bridge
 * fault can do this: with one diode open the circuit gives the healthy
 * output or a little more at speed (see docs/model.md), and the charts say
 * why under them.
 */
export function faultedCurveExcess(healthy: readonly OutputCurvePoint[], faulted: readonly OutputCurvePoint[], marginA = 1): CurveExcess | null {
  const healthyAt = new Map<number, number>();
  for (const p of healthy) healthyAt.set(p.altRpm, p.currentA);
  let excess: CurveExcess | null = null;
  for (const p of faulted) {
    const h = healthyAt.get(p.altRpm);
    if (h === undefined) continue;
    const above = p.currentA - h;
    if (!(above > marginA)) continue;
    if (excess === null) excess = { fromAltRpm: p.altRpm, toAltRpm: p.altRpm, mostA: above };
    else {
      excess.fromAltRpm = Math.min(excess.fromAltRpm, p.altRpm);
      excess.toAltRpm = Math.max(excess.toAltRpm, p.altRpm);
      excess.mostA = Math.max(excess.mostA, above);
    }
  }
  return excess;
}
