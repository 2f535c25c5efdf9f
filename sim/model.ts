/**
 * Derived constants of one set of effective parameters: cable resistances,
 * the alternator's EMF constant and field saturation, the bridge
 * characteristic of its diode topology. Compiled once per parameter set and
 * per combination of active changes (faults), and cached, so the step does
 * arithmetic only.
 *
 * Units in names: V, A, Ohm, S (siemens), H, s, C, rad/s.
 */

import { detCos, detExp, detTanh } from './det-math.ts';
import type { VehicleParams } from './params.ts';
import { copperResistanceOhm } from './params.ts';
import type { CarChange } from './car-changes.ts';
import { activeChangeMask, applyChanges } from './car-changes.ts';
import type { BridgePoint, BridgeTable, BridgeTopology } from './bridge.ts';
import { bridgeOperatingPoint, bridgeTable, diodeDropV, openCircuitRippleRatio } from './bridge.ts';
import { capacityAs } from './battery.ts';
import { workspace } from './workspace.ts';

/** Copper's temperature coefficient of resistance near 20 C. */
export const COPPER_ALPHA_PER_C = 0.0039;
/** Voltage lost across the regulator's field driver when on. */
export const FIELD_DRIVER_DROP_V = 0.3;
/** Freewheel diode across the field while the driver is off. */
export const FIELD_FREEWHEEL_V = 0.7;
/** The regulator's own electronics, B+ to case (about 1 mA). */
export const REGULATOR_SELF_CONDUCTANCE_S = 1e-4;
/** Burden of the series ammeter on its 10 A range, with leads. */
export const AMMETER_RESISTANCE_OHM = 0.02;
export const AMMETER_FUSE_A = 11;
/** Alternator rotor and pulley inertia. */
export const ALTERNATOR_INERTIA_KGM2 = 0.004;
/** "Hot" and "cold" alternator for the output curve. */
export const HOT_ALTERNATOR_C = 100;
export const COLD_ALTERNATOR_C = 25;
/** Smallest resistance of any wiring path (a bolted joint is never a perfect short). */
const MIN_PATH_OHM = 2e-5;
/** Reference field voltage for the EMF constant (see cut-in). */
const REFERENCE_FIELD_V = 13.5;
/** B+ voltage of the output curve and of the rating (SAE J56 test voltage). */
export const CURVE_TEST_V = 13.5;

export interface Model {
  p: VehicleParams;
  topology: BridgeTopology;
  table: BridgeTable;
  /** AC rms of the bridge's unloaded output per volt of phase EMF peak. */
  openRippleRatio: number;
  /** Phase EMF peak per electrical rad/s at reference flux. */
  emfConstantVsPerRad: number;
  fieldKneeA: number;
  tanhReference: number;
  rPosOhm: number;
  rBplusOhm: number;
  rNegOhm: number;
  rStrapOhm: number;
  rMountOhm: number;
  gPileMaxS: number;
  /** Accessories by id: conductance (S) and constant current (A). */
  accessoryG: Map<string, number>;
  accessoryI: Map<string, number>;
  /** Accessories fed straight from the battery (they work with the key off). */
  accessoryKeyOff: Set<string>;
  linkTimeConstantS: number;
  starterG: number;
  capacityAs: number;
  leakageG: number;
  diode: { saturationCurrentA: number; emissionCoefficient: number };
  /** Conductances of the fixed paths, 1 / the resistances above (the negative cable with and without the series ammeter). */
  posG: number;
  bplusG: number;
  mountG: number;
  strapG: number;
  negG: number;
  negGWithAmmeter: number;
  /** Inside the alternator, B+ to case: the regulator's electronics and any leakage. */
  internalG: number;
  /** Air under the hood, toward which the alternator cools. */
  underhoodC: number;
  /** The regulator reads the battery through a working sense line (else its own B+ stud). */
  sensesBattery: boolean;
  /** 2 pi x pole pairs: the electrical rad/s is this x alternator rpm / 60. */
  twoPiPolePairs: number;
  /** e^(-dt/tau) of the fixed time constants, for the last dt asked (see decaysFor). */
  decays: Decays | null;
  /**
   * The healthy unit's sum of stator phase rms currents squared (A^2) when it
   * gives its rated output at its rating speed: the copper loss that makes
   * `alternator.fullLoadTempRiseC`. The winding heats in proportion to the
   * stator's copper loss against this (see stepInto).
   */
  ratedStatorSquaresA2: number;
  /** Equivalent field current per ampere of stator DC current (see fluxWithStatorDc). */
  fieldAPerStatorDcA: number;
}

export interface Decays {
  dtS: number;
  engine: number;
  alternatorThermal: number;
  link: number;
  ammeterFuse: number;
}

/** Time constant of the series ammeter's fuse. */
export const AMMETER_FUSE_TIME_CONSTANT_S = 2;

/** Per-step decay factors of the model's fixed time constants (computed once per dt). */
export function decaysFor(m: Model, dtS: number): Decays {
  if (m.decays && m.decays.dtS === dtS) return m.decays;
  const d: Decays = {
    dtS,
    engine: detExp(-dtS / m.p.engine.lagTimeConstantS),
    alternatorThermal: detExp(-dtS / m.p.alternator.thermalTimeConstantS),
    link: detExp(-dtS / m.linkTimeConstantS),
    ammeterFuse: detExp(-dtS / AMMETER_FUSE_TIME_CONSTANT_S),
  };
  m.decays = d;
  return d;
}

/** Resistance of a copper winding at a temperature, given its value at 20 C. */
export function copperAt(rAt20: number, tempC: number): number {
  return rAt20 * (1 + COPPER_ALPHA_PER_C * (tempC - 20));
}

export function compile(p: VehicleParams): Model {
  const a = p.alternator;
  const w = p.wiring;
  const topology: BridgeTopology = { openDiodes: a.openDiodes, shortedDiodes: a.shortedDiodes, openPhases: a.openPhases };
  // Cut-in: the full-field unit (field at 13.5 V, 20 C) just reaches 13.5 V
  // at B+ with a 1 A load: sqrt(3) E_peak = 13.5 + two diode drops.
  const cutInOmega = (2 * Math.PI * a.polePairs * a.cutInAltRpm) / 60;
  const dropAt1A = diodeDropV({ saturationCurrentA: a.diodeSaturationCurrentA, emissionCoefficient: a.diodeEmissionCoefficient }, 1);
  const emfConstant = (REFERENCE_FIELD_V + 2 * dropAt1A) / (Math.sqrt(3) * cutInOmega);
  const referenceFieldA = (REFERENCE_FIELD_V - FIELD_DRIVER_DROP_V) / a.fieldResistanceOhmAt20C;
  const accessoryG = new Map<string, number>();
  const accessoryI = new Map<string, number>();
  const accessoryKeyOff = new Set<string>();
  for (const acc of p.loads.accessories) {
    if (acc.keyOff) accessoryKeyOff.add(acc.id);
    if ('resistanceOhm' in acc) accessoryG.set(acc.id, acc.resistanceOhm > 0 ? 1 / acc.resistanceOhm : 0);
    else accessoryI.set(acc.id, Math.max(0, acc.currentA));
  }
  const joint = 2 * w.connectionResistanceOhm;
  // A path of exactly zero resistance would make the network singular.
  const floor = (r: number) => (r > MIN_PATH_OHM ? r : MIN_PATH_OHM);
  const rPosOhm = floor(w.postClampPosOhm + copperResistanceOhm(w.batteryPosCableAwg, w.batteryPosCableLengthM) + joint);
  const rBplusOhm = floor(
    copperResistanceOhm(w.bplusCableAwg, w.bplusCableLengthM) +
      copperResistanceOhm(w.fusibleLinkAwg, w.fusibleLinkLengthM) +
      w.bplusExtraOhm +
      joint,
  );
  const rNegOhm = floor(w.postClampNegOhm + copperResistanceOhm(w.batteryNegCableAwg, w.batteryNegCableLengthM) + joint);
  const rStrapOhm = floor(copperResistanceOhm(w.groundStrapAwg, w.groundStrapLengthM) + joint);
  const rMountOhm = floor(joint + w.groundExtraOhm);
  const leakageG = a.keyOffLeakageA / 12.6;
  const model: Model = {
    p,
    topology,
    table: bridgeTable(topology),
    openRippleRatio: openCircuitRippleRatio(topology),
    emfConstantVsPerRad: emfConstant,
    fieldKneeA: a.fieldKneeCurrentA,
    tanhReference: detTanh(referenceFieldA / a.fieldKneeCurrentA),
    rPosOhm,
    rBplusOhm,
    rNegOhm,
    rStrapOhm,
    rMountOhm,
    gPileMaxS: p.pile.maxCurrentAAt12V / 12,
    accessoryG,
    accessoryI,
    accessoryKeyOff,
    linkTimeConstantS: w.fusibleLinkI2tA2s / (w.fusibleLinkRatingA * w.fusibleLinkRatingA),
    starterG: p.engine.crankCurrentA / 10,
    capacityAs: capacityAs(p.battery),
    leakageG,
    diode: { saturationCurrentA: a.diodeSaturationCurrentA, emissionCoefficient: a.diodeEmissionCoefficient },
    posG: 1 / rPosOhm,
    bplusG: 1 / rBplusOhm,
    mountG: 1 / rMountOhm,
    strapG: 1 / rStrapOhm,
    negG: 1 / rNegOhm,
    negGWithAmmeter: 1 / (rNegOhm + AMMETER_RESISTANCE_OHM),
    internalG: REGULATOR_SELF_CONDUCTANCE_S + leakageG,
    underhoodC: p.ambientC + 0.4 * (p.engineTempC - p.ambientC),
    sensesBattery: p.regulator.sense === 'battery' && !(w.senseLineOhm > 1000),
    twoPiPolePairs: 2 * Math.PI * a.polePairs,
    decays: null,
    ratedStatorSquaresA2: 0,
    fieldAPerStatorDcA: (a.synchronousInductanceH * a.fieldKneeCurrentA * detTanh(referenceFieldA / a.fieldKneeCurrentA)) / emfConstant,
  };
  model.ratedStatorSquaresA2 = ratedStatorSquaresA2(model);
  return model;
}

const HEALTHY_BRIDGE: Readonly<BridgeTopology> = Object.freeze({ openDiodes: [], shortedDiodes: [], openPhases: [] });

/**
 * Stator copper loss over R at the rating: the healthy bridge at the rating
 * speed, full field, cold, 13.5 V at B+ (as the output curve), scaled from
 * the output it gives there to the rated current (the sum of squares goes as
 * the output squared at one speed). About 2 I_rated^2: each phase carries the
 * output for two thirds of the cycle.
 */
function ratedStatorSquaresA2(m: Model): number {
  const a = m.p.alternator;
  const fallback = 2 * a.ratedCurrentA * a.ratedCurrentA;
  const omegaE = (m.twoPiPolePairs * a.ratedAltRpm) / 60;
  const fieldA = Math.max(0, (CURVE_TEST_V - FIELD_DRIVER_DROP_V) / fieldResistanceOhm(m, COLD_ALTERNATOR_C));
  const point: BridgePoint = { meanA: 0, acRmsA: 0, dominantHarmonic: 6, dcV: 0, phaseSquaresA2: 0, statorDcA: 0 };
  bridgeOperatingPoint(
    {
      table: bridgeTable(HEALTHY_BRIDGE),
      emfPeakV: m.emfConstantVsPerRad * omegaE * relativeFlux(m, fieldA),
      reactanceOhm: omegaE * a.synchronousInductanceH,
      phaseResistanceOhm: copperAt(a.statorResistanceOhmAt20C, COLD_ALTERNATOR_C) + a.diodeSeriesResistanceOhm,
      diode: m.diode,
      dcTheveninV: CURVE_TEST_V,
      dcResistanceOhm: 0,
      guessA: 0,
    },
    point,
  );
  if (!(point.meanA > 1) || !(point.phaseSquaresA2 > 0)) return fallback;
  return (point.phaseSquaresA2 / (point.meanA * point.meanA)) * a.ratedCurrentA * a.ratedCurrentA;
}

/** cos((2j + 1) pi / 8), j = 0..3: a mean over a turn of a smooth function of cos(theta) from four values (Gauss-Chebyshev). */
const TURN_NODES = [0, 1, 2, 3].map((j) => detCos(((2 * j + 1) * Math.PI) / 8));

/**
 * Flux with the stator carrying a standing DC current (a bridge fault: with
 * one diode open, its phase carries about the output in DC). That current's
 * field stands still while the rotor turns, so the rotor's iron sees it as
 * an equivalent field current swinging by +-d each turn about the field's
 * own, and the iron's curve (the tanh of relativeFlux) bends over: the
 * average flux, and with it the EMF, falls. d is the DC current's flux
 * linkage L_s I_dc over the field's flux linkage per ampere below the knee
 * (the EMF constant k over i_knee tanh(i_ref / i_knee)), all of them the
 * machine's own constants; no further fitting. Armature reaction through
 * the saturation curve (the MMF of the stator added to the field's),
 * a textbook treatment; the estimate leaves out the stator iron's own
 * knee and the rotor's eddy currents (see docs/model.md).
 */
export function fluxWithStatorDc(m: Model, fieldA: number, statorDcA: number): number {
  if (!(statorDcA > 0)) return relativeFlux(m, fieldA);
  const i = fieldA > 0 ? fieldA : 0;
  const swing = m.fieldAPerStatorDcA * statorDcA;
  let sum = 0;
  for (const c of TURN_NODES) sum += detTanh((i + swing * c) / m.fieldKneeA);
  return sum / TURN_NODES.length / m.tanhReference;
}

/** Flux of the claw-pole rotor relative to reference: saturates above the knee. */
export function relativeFlux(m: Model, fieldA: number): number {
  return detTanh((fieldA > 0 ? fieldA : 0) / m.fieldKneeA) / m.tanhReference;
}

/** Field winding plus brushes at a temperature. */
export function fieldResistanceOhm(m: Model, tempC: number): number {
  return copperAt(m.p.alternator.fieldResistanceOhmAt20C, tempC) + m.p.alternator.brushResistanceOhm;
}

const cache = workspace.cache.models;
const CACHE_PER_PARAMS = 8;

/**
 * The last answer, looked at before the cache: the step asks every 10 ms
 * with the same params and change list, which stay the same objects until an
 * event replaces them. Compiling is deterministic, so whichever copy of a
 * model is returned gives the same results. (It keeps the last params alive
 * until another set is asked for.)
 */
const lastAnswer = workspace.cache.lastModel;

/**
 * The compiled model of `params` with the changes active at `timeS`. Reuses
 * the compiled model while the same change list has the same active set.
 */
export function effectiveModel(params: VehicleParams, changes: readonly CarChange[], timeS: number): Model {
  if (changes.length > 30) return compile(applyChanges(params, changes, timeS));
  const mask = activeChangeMask(changes, timeS);
  const last = lastAnswer;
  if (last.params === params && last.changes === changes && last.mask === mask) return last.model;
  const model = cachedModel(params, changes, mask, timeS);
  last.params = params;
  last.changes = changes;
  last.mask = mask;
  last.model = model;
  return model;
}

function cachedModel(params: VehicleParams, changes: readonly CarChange[], mask: number, timeS: number): Model {
  let entries = cache.get(params);
  if (!entries) {
    entries = [];
    cache.set(params, entries);
  }
  for (const e of entries) {
    if (e.changes === changes && e.mask === mask) return e.model;
  }
  const model = compile(mask === 0 ? params : applyChanges(params, changes, timeS));
  entries.unshift({ changes, mask, model });
  if (entries.length > CACHE_PER_PARAMS) entries.pop();
  return model;
}
