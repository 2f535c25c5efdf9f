/**
 * The model's one pure step: engine, belt, alternator, field and regulator,
 * battery, wiring, loads and the bench's pile, advanced by a fixed dt.
 * `step` never mutates its arguments and uses no clock and no Math.random:
 * a seeded generator lives in the state, so the same params, seed and
 * controls give the same states bit for bit.
 *
 * Order within a step: slow states (engine speed, belt, field current,
 * temperatures, battery charge and surface charge) advance from the last
 * solution; then the DC network is solved at the new operating point, with
 * the alternator as a nonlinear source, so KCL holds at every node of the
 * solution the step returns.
 *
 * Units are in the names: ms and s, rpm, V, A, C (degrees Celsius), Nm.
 */

import type { VehicleParams } from './params.ts';
import type { CarChange } from './car-changes.ts';
import type { Controls, Conductor, KeyPosition } from './inputs.ts';
import { initialControls } from './inputs.ts';
import type { NetworkInput, NetworkSolution } from './network.ts';
import { blankSolution, solveNetworkInto } from './network.ts';
import type { Model } from './model.ts';
import {
  ALTERNATOR_INERTIA_KGM2,
  AMMETER_FUSE_A,
  FIELD_DRIVER_DROP_V,
  FIELD_FREEWHEEL_V,
  effectiveModel,
  copperAt,
  decaysFor,
  fieldResistanceOhm,
  relativeFlux,
} from './model.ts';
import {
  CHARGE_EFFICIENCY,
  internalResistanceOhm,
  openCircuitVoltageV,
  polarizationResistanceOhm,
  polarizationTimeConstantS,
} from './battery.ts';
import { nextRngState, rngValue } from './rng.ts';
import { detExp } from './det-math.ts';

/** The fixed step. Replays always use it; changing it changes every stored replay. */
export const DT_MS = 10;

export type EngineStatus = 'off' | 'cranking' | 'running' | 'stalled';

/** Plain JSON-serialisable data. */
export interface SimState {
  timeMs: number;
  /** State of the seeded generator (uint32). */
  rngState: number;
  /** The controls in force during the last step (the instruments read leads and clamp here). */
  controls: Controls;

  engineStatus: EngineStatus;
  engineRpm: number;
  /** Progress toward firing while cranking, 0..1. */
  crankProgress01: number;
  /** Time the starter voltage or running voltage has been too low. */
  engineLowVoltageS: number;
  /** Key position at the end of the previous step (to detect turns of the key). */
  lastKey: KeyPosition;

  altRpm: number;
  beltSlipping: boolean;
  /** Torque the alternator asked of the belt at the last step. */
  altTorqueNm: number;
  alternatorTempC: number;

  fieldCurrentA: number;
  fieldDuty01: number;
  /** Integral part of the regulator's duty. */
  regulatorIntegral01: number;
  /** Set point the regulator aims at now (temperature compensated). */
  regulatorSetPointV: number;
  /** What the regulator reads at its sense point. */
  regulatorSenseV: number;

  batterySoc01: number;
  /** Surface (polarisation) charge: positive after charging, negative after a heavy discharge. */
  batteryPolarizationV: number;

  /** Heat in the fusible link as a fraction of what melts it. */
  fusibleLinkHeat01: number;
  fusibleLinkBlown: boolean;

  pileTempC: number;
  pileTripped: boolean;

  /** The 10 A fuse of the series ammeter. */
  ammeterFuseHeat01: number;
  ammeterFuseBlown: boolean;
  lastAmmeterInSeries: boolean;

  /** Time left before modules sleep with the key off (0: asleep). */
  modulesAwakeS: number;

  chargeWarning: boolean;
  /** Time the regulator has been unable to hold its set point. */
  lowChargeS: number;

  /** Clamp's hall-sensor offset; drawn anew whenever the clamp is moved. */
  clampOffsetA: number;
  clampConductorSeen: Conductor | null;

  net: NetworkSolution;
}

export type { Controls };

/** Voltage at which loads given in amperes draw their rating. */
const LOAD_RATING_V = 12.6;
const ENGINE_DIES_BELOW_V = 6;
const REGULATOR_KP_PER_V = 1;
const REGULATOR_KI_PER_VS = 12;
/** Sense-point sensitivity at which the gains above apply in full. */
const REGULATOR_REFERENCE_OHM = 0.004;
/** B+ voltage at which the regulator's overvoltage protection drops the field. */
const REGULATOR_CUTOFF_V = 20;
/** Below this the regulator sees no phase signal and only pre-excites. */
const REGULATION_MIN_ALT_RPM = 300;
const ALT_FRICTION_NM = 0.15;

function clamp(x: number, lo: number, hi: number): number {
  return x < lo ? lo : x > hi ? hi : x;
}

/** Regulator set point at its temperature. */
export function regulatorSetPointV(p: VehicleParams, regulatorTempC: number): number {
  return p.regulator.setPointVAt25C + p.regulator.tempCoeffVPerC * (regulatorTempC - 25);
}

/**
 * What the step reads of its controls, copied out once per controls object.
 * Every event replaces the controls with a new object (applyInput; none is
 * ever edited), and those objects differ in shape from one another, which
 * makes reading their fields slow where the step reads them every 10 ms;
 * this copy always has one shape. Kept for the last controls object seen.
 */
interface ControlsRead {
  of: Controls | null;
  key: KeyPosition;
  heldRpm: number;
  accessoriesOn: readonly string[];
  pileDial01: number;
  ammeterInSeries: boolean;
  bplusConnected: boolean;
  changes: readonly CarChange[];
  clampConductor: Conductor | null;
}

const controlsRead: ControlsRead = {
  of: null,
  key: 'off',
  heldRpm: 0,
  accessoriesOn: [],
  pileDial01: 0,
  ammeterInSeries: false,
  bplusConnected: true,
  changes: [],
  clampConductor: null,
};

function readControls(controls: Controls): ControlsRead {
  const r = controlsRead;
  if (r.of !== controls) {
    r.of = controls;
    r.key = controls.key;
    r.heldRpm = controls.heldRpm;
    r.accessoriesOn = controls.accessoriesOn;
    r.pileDial01 = controls.pileDial01;
    r.ammeterInSeries = controls.ammeterInSeries;
    r.bplusConnected = controls.bplusConnected;
    r.changes = controls.changes;
    r.clampConductor = controls.clamp.conductor;
  }
  return r;
}

interface NetworkInputs {
  model: Model;
  controls: ControlsRead;
  engineStatus: EngineStatus;
  altRpm: number;
  alternatorTempC: number;
  fieldCurrentA: number;
  fieldDuty01: number;
  soc01: number;
  polarizationV: number;
  linkOpen: boolean;
  pileOn: boolean;
  ammeterFuseBlown: boolean;
  modulesAwake: boolean;
  guessBridgeA: number;
}

// Reused for every solve (the network copies what it keeps); never escapes this module.
const networkInput: NetworkInput = {
  batteryEmfV: 0,
  batteryR: 1,
  pileG: 0,
  posG: 0,
  bplusG: 0,
  internalG: 0,
  mountG: 0,
  strapG: 0,
  negG: 0,
  loadG: 0,
  starterG: 0,
  fieldSupplyA: 0,
  table: null as unknown as NetworkInput['table'],
  emfPeakV: 0,
  reactanceOhm: 1,
  phaseResistanceOhm: 0,
  diode: { saturationCurrentA: 1e-7, emissionCoefficient: 1.6 },
  guessA: 0,
};

/**
 * The vehicle loads' conductance, remembered for the last model, key state,
 * accessories switched on and module state: these change only with an event
 * or a fault, while the step asks every 10 ms. The accessories are compared
 * by content, so an array edited in place cannot be mistaken for the last.
 */
const loadMemo = {
  model: null as Model | null,
  keyOn: false,
  modulesAwake: false,
  accessoriesOn: [] as string[],
  loadG: 0,
};

function sameIds(a: readonly string[], b: readonly string[]): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

// Loads between the junction and the body, all as conductances: a load
// given in amperes draws that current at 12.6 V (so an open return path
// carries nothing, as in the car).
function loadConductanceS(m: Model, keyOn: boolean, accessoriesOn: readonly string[], modulesAwake: boolean): number {
  const memo = loadMemo;
  if (memo.model === m && memo.keyOn === keyOn && memo.modulesAwake === modulesAwake && sameIds(memo.accessoriesOn, accessoriesOn)) {
    return memo.loadG;
  }
  const p = m.p;
  let loadG = 1e-6;
  let ratedA = 0;
  if (keyOn) {
    ratedA += p.loads.baseElectronicsA;
    for (const id of accessoriesOn) {
      loadG += m.accessoryG.get(id) ?? 0;
      ratedA += m.accessoryI.get(id) ?? 0;
    }
  } else {
    ratedA += modulesAwake ? p.loads.keyOffAwakeA : p.loads.keyOffSleepA;
  }
  ratedA += p.loads.stuckDrawA;
  loadG += ratedA / LOAD_RATING_V;
  memo.model = m;
  memo.keyOn = keyOn;
  memo.modulesAwake = modulesAwake;
  memo.accessoriesOn = [...accessoriesOn];
  memo.loadG = loadG;
  return loadG;
}

/** The network at an operating point, written into `out` (see solveNetworkInto). */
function solveAt(n: NetworkInputs, out: NetworkSolution): NetworkSolution {
  const m = n.model;
  const p = m.p;
  const c = n.controls;
  const loadG = loadConductanceS(m, c.key !== 'off', c.accessoriesOn, n.modulesAwake);

  // Resistance follows charge in steps of 0.1 % so the network's responses can be reused.
  const r0 = internalResistanceOhm(p.battery, Math.round(n.soc01 * 1000) / 1000);
  const emf = openCircuitVoltageV(n.soc01, p.battery.tempC) + n.polarizationV;
  const cranking = c.key === 'start' && (n.engineStatus === 'cranking' || n.engineStatus === 'stalled');

  const omegaE = (m.twoPiPolePairs * n.altRpm) / 60;
  const flux = relativeFlux(m, n.fieldCurrentA);

  const a = p.alternator;
  const ni = networkInput;
  ni.batteryEmfV = emf;
  ni.batteryR = r0;
  ni.pileG = n.pileOn ? m.gPileMaxS * c.pileDial01 * c.pileDial01 : 0;
  ni.posG = m.posG;
  ni.bplusG = n.linkOpen || !c.bplusConnected ? 0 : m.bplusG;
  ni.internalG = m.internalG;
  ni.mountG = m.mountG;
  ni.strapG = m.strapG;
  ni.negG = !c.ammeterInSeries ? m.negG : n.ammeterFuseBlown ? 0 : m.negGWithAmmeter;
  ni.loadG = loadG;
  ni.starterG = cranking ? m.starterG : 0;
  ni.fieldSupplyA = n.fieldDuty01 * n.fieldCurrentA;
  ni.table = m.table;
  ni.emfPeakV = m.emfConstantVsPerRad * omegaE * flux;
  ni.reactanceOhm = omegaE * a.synchronousInductanceH;
  ni.phaseResistanceOhm = copperAt(a.statorResistanceOhmAt20C, n.alternatorTempC) + a.diodeSeriesResistanceOhm;
  ni.diode = m.diode;
  ni.guessA = n.guessBridgeA;
  return solveNetworkInto(ni, out);
}

/** Volts at the sense point (against the case) per ampere from the bridge. */
function senseTransferOhm(m: Model, net: NetworkSolution): number {
  const z = m.sensesBattery ? net.rippleOhm.batteryPos : net.rippleOhm.bplus;
  return z - net.rippleOhm.altCase;
}

/** The regulator's reading of its sense point (relative to its own ground, the case). */
function senseVoltage(m: Model, net: NetworkSolution): number {
  const point = m.sensesBattery ? net.nodeV.batteryPos : net.nodeV.bplus;
  return point - net.nodeV.altCase;
}

/**
 * The state at 0 ms. `changes` is the car's schedule (compiled-car.ts): in
 * the controls from the first state, so a change active at 0 ms is in force
 * in this state already.
 */
export function initialState(params: VehicleParams, seed: number, changes: readonly CarChange[] = []): SimState {
  const controls = changes.length ? { ...initialControls(), changes: [...changes] } : initialControls();
  const model = effectiveModel(params, controls.changes, 0);
  const p = model.p;
  const rng = nextRngState(seed >>> 0);
  const net = solveAt({
    model,
    controls: readControls(controls),
    engineStatus: 'off',
    altRpm: 0,
    alternatorTempC: p.alternator.initialTempC,
    fieldCurrentA: 0,
    fieldDuty01: 0,
    soc01: p.battery.initialSoc01,
    polarizationV: p.battery.initialSurfaceChargeV,
    linkOpen: p.wiring.fusibleLinkOpen,
    pileOn: true,
    ammeterFuseBlown: false,
    modulesAwake: false,
    guessBridgeA: 0,
  }, blankSolution());
  // The blank state fixes the fields and their order (one shape for every state); these are the ones not zero at the start.
  return Object.assign(blankState(), {
    rngState: rng,
    controls,
    alternatorTempC: p.alternator.initialTempC,
    regulatorSetPointV: regulatorSetPointV(p, p.alternator.initialTempC),
    regulatorSenseV: senseVoltage(model, net),
    batterySoc01: clamp(p.battery.initialSoc01, 0, 1),
    batteryPolarizationV: p.battery.initialSurfaceChargeV,
    pileTempC: p.ambientC,
    clampOffsetA: (rngValue(rng) - 0.5) * 4,
    net,
  });
}

// The step's operating point for solveAt, reused every step (solveAt keeps none of it).
const stepInputs: NetworkInputs = {
  model: null as unknown as Model,
  controls: controlsRead,
  engineStatus: 'off',
  altRpm: 0,
  alternatorTempC: 0,
  fieldCurrentA: 0,
  fieldDuty01: 0,
  soc01: 0,
  polarizationV: 0,
  linkOpen: false,
  pileOn: true,
  ammeterFuseBlown: false,
  modulesAwake: false,
  guessBridgeA: 0,
};

/** A state for stepInto to fill: fresh objects, every field in the order the step writes (and JSON shows) them. */
export function blankState(): SimState {
  return {
    timeMs: 0,
    rngState: 0,
    controls: null as unknown as Controls,
    engineStatus: 'off',
    engineRpm: 0,
    crankProgress01: 0,
    engineLowVoltageS: 0,
    lastKey: 'off',
    altRpm: 0,
    beltSlipping: false,
    altTorqueNm: 0,
    alternatorTempC: 0,
    fieldCurrentA: 0,
    fieldDuty01: 0,
    regulatorIntegral01: 0,
    regulatorSetPointV: 0,
    regulatorSenseV: 0,
    batterySoc01: 0,
    batteryPolarizationV: 0,
    fusibleLinkHeat01: 0,
    fusibleLinkBlown: false,
    pileTempC: 0,
    pileTripped: false,
    ammeterFuseHeat01: 0,
    ammeterFuseBlown: false,
    lastAmmeterInSeries: false,
    modulesAwakeS: 0,
    chargeWarning: false,
    lowChargeS: 0,
    clampOffsetA: 0,
    clampConductorSeen: null,
    net: blankSolution(),
  };
}

export function step(params: VehicleParams, state: SimState, controls: Controls, dtMs: number = DT_MS): SimState {
  return stepInto(params, state, controls, dtMs, blankState());
}

/**
 * The step written into `out` instead of a new state, for callers that keep
 * only the last of many steps (replay's advance): `out` may be `state`
 * itself. Everything is read from `state` (and its network) before anything
 * of `out` is written: the network is solved into `out.net` once the
 * previous solution has been read, and the other fields are written last.
 */
export function stepInto(params: VehicleParams, state: SimState, controls: Controls, dtMs: number, out: SimState): SimState {
  const dt = dtMs / 1000;
  const timeMs = state.timeMs + dtMs;
  const c = readControls(controls);
  const model = effectiveModel(params, c.changes, timeMs / 1000);
  const p = model.p;
  const prev = state.net;
  const key = c.key;
  const keyOn = key !== 'off';
  let rng = state.rngState;

  // ---- Engine ------------------------------------------------------------
  const starterV = prev.nodeV.junction - prev.nodeV.engine;
  const supplyV = prev.nodeV.junction - prev.nodeV.chassis;
  let status = state.engineStatus;
  let crank = state.crankProgress01;
  let lowV = state.engineLowVoltageS;
  if (key === 'off') {
    status = 'off';
    crank = 0;
    lowV = 0;
  } else if (key === 'start') {
    if (status === 'off' || (status === 'stalled' && state.lastKey !== 'start')) {
      status = 'cranking';
      crank = 0;
      lowV = 0;
    } else if (status === 'cranking') {
      if (starterV >= p.engine.minCrankVoltageV) {
        crank += dt / p.engine.crankToStartS;
        lowV = 0;
      } else {
        lowV += dt;
        if (lowV > 0.5) status = 'stalled';
      }
      if (crank >= 1) {
        status = 'running';
        lowV = 0;
      }
    }
  } else {
    // Key on: a crank released before the engine fired leaves it stopped.
    if (status === 'cranking') {
      status = 'off';
      crank = 0;
    }
  }
  if (status === 'running') {
    if (supplyV < ENGINE_DIES_BELOW_V) {
      lowV += dt;
      if (lowV > 0.5) status = 'stalled';
    } else lowV = 0;
  }
  let targetRpm = 0;
  if (status === 'running') targetRpm = clamp(Math.max(p.engine.idleRpm, c.heldRpm), p.engine.idleRpm, p.engine.maxHeldRpm);
  else if (status === 'cranking') targetRpm = clamp((p.engine.crankRpm * starterV) / 10, 0, 1.5 * p.engine.crankRpm);
  const decay = decaysFor(model, dt);
  const lag = 1 - decay.engine;
  let engineRpm = state.engineRpm + (targetRpm - state.engineRpm) * lag;
  if (status === 'running') {
    rng = nextRngState(rng);
    // Combustion makes the speed flicker by a few rpm.
    engineRpm += (rngValue(rng) - 0.5) * 6;
  }
  if (engineRpm < 0.5 && targetRpm === 0) engineRpm = 0;

  // ---- Belt and alternator speed -------------------------------------------
  const syncRpm = engineRpm * p.belt.pulleyRatio;
  let altRpm: number;
  let slipping = state.beltSlipping;
  const torque = state.altTorqueNm;
  if (!slipping && torque > p.belt.gripNm) slipping = true;
  if (slipping) {
    const toRadS = (2 * Math.PI) / 60;
    const drive = syncRpm >= state.altRpm ? p.belt.gripNm : -p.belt.gripNm;
    const accel = (drive - torque) / ALTERNATOR_INERTIA_KGM2;
    altRpm = state.altRpm + (accel * dt) / toRadS;
    if (altRpm < 0) altRpm = 0;
    const crossed = (state.altRpm - syncRpm) * (altRpm - syncRpm) <= 0;
    if (crossed && torque <= p.belt.gripNm) {
      altRpm = syncRpm;
      slipping = false;
    }
  } else altRpm = syncRpm;

  // ---- Regulator and field ---------------------------------------------------
  const regTempC = state.alternatorTempC;
  const setPointV = regulatorSetPointV(p, regTempC);
  const senseV = state.regulatorSenseV;
  let integral = state.regulatorIntegral01;
  let duty: number;
  if (!keyOn) {
    duty = 0;
    integral = 0;
  } else if (altRpm < REGULATION_MIN_ALT_RPM) {
    duty = p.regulator.preExcitationDuty01;
    integral = duty;
  } else {
    // The averaged switching regulator as a PI controller. Its loop gain grows
    // with how hard the sense point moves per ampere of output, so the gains
    // are scaled by that (known from the last solution) to keep it stable with
    // a stiff battery, a resistive cable or an open B+ alike.
    const err = setPointV - senseV;
    const sensitivityOhm = Math.max(1e-3, senseTransferOhm(model, prev));
    const scale = Math.min(1, REGULATOR_REFERENCE_OHM / sensitivityOhm);
    integral = clamp(integral + REGULATOR_KI_PER_VS * scale * err * dt, 0, 1);
    duty = clamp(integral + REGULATOR_KP_PER_V * scale * err, 0, 1);
  }
  const bplusV = prev.nodeV.bplus - prev.nodeV.altCase;
  // Overvoltage protection: the regulator drops the field above 20 V at B+ (a load dump).
  if (bplusV > REGULATOR_CUTOFF_V) {
    duty = 0;
    integral = 0;
  }
  if (keyOn) duty = Math.max(duty, p.regulator.dutyFloor01);
  const rField = fieldResistanceOhm(model, state.alternatorTempC);
  const drive = duty * Math.max(0, bplusV - FIELD_DRIVER_DROP_V) - (1 - duty) * (state.fieldCurrentA > 0.01 ? FIELD_FREEWHEEL_V : 0);
  const fieldTarget = Math.max(0, drive / rField);
  const fieldDecay = detExp((-dt * rField) / p.alternator.fieldInductanceH);
  const fieldCurrentA = fieldTarget + (state.fieldCurrentA - fieldTarget) * fieldDecay;

  // ---- Temperatures, battery charge, fuses ---------------------------------
  const bridgeA = prev.bridgeCurrentA;
  const loadFraction = bridgeA / p.alternator.ratedCurrentA;
  const altHotC = model.underhoodC + p.alternator.fullLoadTempRiseC * loadFraction * loadFraction;
  const altTempC = altHotC + (state.alternatorTempC - altHotC) * decay.alternatorThermal;

  const dischargeA = prev.branchA.battery;
  const r0 = internalResistanceOhm(p.battery, state.batterySoc01);
  const rp = polarizationResistanceOhm(p.battery, state.batterySoc01, dischargeA, r0);
  const tauP = polarizationTimeConstantS(p.battery, dischargeA);
  const polTarget = -dischargeA * rp;
  const polarizationV = polTarget + (state.batteryPolarizationV - polTarget) * detExp(-dt / tauP);
  const chargeAs = dischargeA >= 0 ? -dischargeA * dt : -dischargeA * CHARGE_EFFICIENCY * dt;
  const soc01 = clamp(state.batterySoc01 + chargeAs / model.capacityAs, 0, 1);

  const linkA = prev.branchA.bplusCable;
  const linkRatio = linkA / p.wiring.fusibleLinkRatingA;
  const linkTarget = linkRatio * linkRatio;
  const linkHeat = linkTarget + (state.fusibleLinkHeat01 - linkTarget) * decay.link;
  const linkBlown = state.fusibleLinkBlown || linkHeat >= 1;

  const ammeterA = c.ammeterInSeries ? prev.branchA.negCable : 0;
  const fuseRatio = ammeterA / AMMETER_FUSE_A;
  const fuseTarget = fuseRatio * fuseRatio;
  const fuseHeat = fuseTarget + (state.ammeterFuseHeat01 - fuseTarget) * decay.ammeterFuse;
  const fuseBlown = state.ammeterFuseBlown || (c.ammeterInSeries && fuseHeat >= 1);

  const pileW = prev.nodeV.batteryPos * prev.branchA.pile;
  const pileTempC =
    state.pileTempC + (dt * (pileW - p.pile.coolingWPerC * (state.pileTempC - p.ambientC))) / p.pile.heatCapacityJPerC;
  let pileTripped = state.pileTripped;
  if (!pileTripped && pileTempC > p.pile.tripC) pileTripped = true;
  else if (pileTripped && c.pileDial01 === 0 && pileTempC < p.pile.resetC) pileTripped = false;

  // Modules wake with the key on, or when the battery circuit is broken and remade.
  let awakeS = state.modulesAwakeS;
  if (keyOn || c.ammeterInSeries !== state.lastAmmeterInSeries) awakeS = p.loads.moduleSleepDelayS;
  else awakeS = Math.max(0, awakeS - dt);

  // ---- The network at the new operating point -------------------------------
  const at = stepInputs;
  at.model = model;
  at.controls = c;
  at.engineStatus = status;
  at.altRpm = altRpm;
  at.alternatorTempC = altTempC;
  at.fieldCurrentA = fieldCurrentA;
  at.fieldDuty01 = duty;
  at.soc01 = soc01;
  at.polarizationV = polarizationV;
  at.linkOpen = linkBlown || p.wiring.fusibleLinkOpen;
  at.pileOn = !pileTripped;
  at.ammeterFuseBlown = fuseBlown;
  at.modulesAwake = awakeS > 0;
  at.guessBridgeA = prev.bridgeCurrentA;
  // From here on `prev` (which may be out.net) is not read again.
  const net = solveAt(at, out.net);

  // Torque the alternator asks of the belt.
  const omegaAlt = (2 * Math.PI * altRpm) / 60;
  const portV = net.nodeV.bplus - net.nodeV.altCase;
  const altTorqueNm =
    omegaAlt > 1 ? (Math.max(0, portV * net.bridgeCurrentA) / p.alternator.efficiency01) / omegaAlt + ALT_FRICTION_NM : 0;

  // ---- Warning lamp ---------------------------------------------------------
  const newSenseV = senseVoltage(model, net);
  let lowChargeS = state.lowChargeS;
  let lamp = false;
  if (keyOn) {
    if (status !== 'running') {
      lamp = true;
      lowChargeS = 0;
    } else {
      const cannotHold =
        newSenseV < setPointV - 0.5 || newSenseV > 16 || portV > REGULATOR_CUTOFF_V || portV < newSenseV - 1.5;
      lowChargeS = cannotHold ? Math.min(5, lowChargeS + dt) : Math.max(0, lowChargeS - 4 * dt);
      lamp = lowChargeS > 2;
    }
  } else lowChargeS = 0;

  // ---- Clamp offset: moving the clamp disturbs its hall sensor ---------------
  let clampOffsetA = state.clampOffsetA;
  if (c.clampConductor !== state.clampConductorSeen) {
    rng = nextRngState(rng);
    clampOffsetA = (rngValue(rng) - 0.5) * 4;
  }

  out.timeMs = timeMs;
  out.rngState = rng;
  out.controls = controls;
  out.engineStatus = status;
  out.engineRpm = engineRpm;
  out.crankProgress01 = crank;
  out.engineLowVoltageS = lowV;
  out.lastKey = key;
  out.altRpm = altRpm;
  out.beltSlipping = slipping;
  out.altTorqueNm = altTorqueNm;
  out.alternatorTempC = altTempC;
  out.fieldCurrentA = fieldCurrentA;
  out.fieldDuty01 = duty;
  out.regulatorIntegral01 = integral;
  out.regulatorSetPointV = setPointV;
  out.regulatorSenseV = newSenseV;
  out.batterySoc01 = soc01;
  out.batteryPolarizationV = polarizationV;
  out.fusibleLinkHeat01 = linkBlown ? Math.max(1, linkHeat) : linkHeat;
  out.fusibleLinkBlown = linkBlown;
  out.pileTempC = pileTempC;
  out.pileTripped = pileTripped;
  out.ammeterFuseHeat01 = fuseHeat;
  out.ammeterFuseBlown = fuseBlown;
  out.lastAmmeterInSeries = c.ammeterInSeries;
  out.modulesAwakeS = awakeS;
  out.chargeWarning = lamp;
  out.lowChargeS = lowChargeS;
  out.clampOffsetA = clampOffsetA;
  out.clampConductorSeen = c.clampConductor;
  // out.net already holds `net` (solved into it above).
  return out;
}
