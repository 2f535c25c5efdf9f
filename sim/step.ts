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
import type { NetworkSolution } from './network.ts';
import { blankSolution, solveNetworkInto } from './network.ts';
import type { Decays, Model } from './model.ts';
import {
  ALTERNATOR_INERTIA_KGM2,
  AMMETER_FUSE_A,
  FIELD_DRIVER_DROP_V,
  FIELD_FREEWHEEL_V,
  effectiveModel,
  copperAt,
  decaysFor,
  fieldResistanceOhm,
  fluxWithStatorDc,
} from './model.ts';
import { internalResistanceOhm, openCircuitVoltageV, stepBattery } from './battery.ts';
import { nextRngState, rngValue } from './rng.ts';
import { detExp, detTanh } from './det-math.ts';
import { workspace } from './workspace.ts';

/** The fixed step. Replays always use it; changing it changes every stored replay. */
export const DT_MS = 10;

export type EngineStatus = 'off' | 'cranking' | 'running' | 'stalled';

/**
 * What stopped the engine or the crank: the starter got too little voltage
 * (a flat, cold or weak battery, a bad connection), no current reached it at
 * all (the battery circuit is open: the series ammeter's fuse blew, a lead is
 * off), or a running engine lost its supply.
 */
export type EngineStopCause = 'starter-voltage-low' | 'starter-circuit-open' | 'supply-lost';

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
  /** Belt slip as a fraction of belt speed (creep under load, more when the belt slides). */
  beltSlip01: number;
  /** Slipping enough to squeal (a glazed or loose belt under load). */
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
  /** Fast (reaction) polarisation: high while charging, negative under a heavy load, gone within minutes at rest. */
  batteryPolarizationV: number;
  /** Surface charge: left by charging, lingers for hours at rest, used up by a load within a minute or so. */
  batterySurfaceChargeV: number;
  /** Charging current turned into gas (overcharge). */
  batteryGassingA: number;

  /** Heat in the fusible link as a fraction of what melts it. */
  fusibleLinkHeat01: number;
  fusibleLinkBlown: boolean;

  pileTempC: number;
  pileTripped: boolean;

  /** The 10 A fuse of the series ammeter. */
  ammeterFuseHeat01: number;
  ammeterFuseBlown: boolean;
  /** Fuse replacements already taken into account (see Controls.ammeterFusesFitted). */
  ammeterFusesSeen: number;
  lastAmmeterInSeries: boolean;

  /** Time left before modules sleep with the key off (0: asleep). */
  modulesAwakeS: number;

  /** Why the engine will not crank or stopped, while that holds (null otherwise). */
  engineStopCause: EngineStopCause | null;

  chargeWarning: boolean;
  /** Time the regulator has been unable to hold its set point. */
  lowChargeS: number;

  /** Clamp's hall-sensor offset: drawn once, shifted only slightly each time the clamp is moved. */
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
/**
 * Most a sense point can move per ampere of output as far as the regulator's
 * loop goes: a point cut off from the battery is driven by the bridge as a
 * voltage source, so its gain per unit duty stays near the bridge's own
 * voltage, however high its resistance to the battery.
 */
const REGULATOR_SENSITIVITY_CAP_OHM = 0.15;
/**
 * The regulator's B+ overvoltage protection: it holds its own B+ stud at or
 * below this whatever its sense line asks (a load dump, or B+ cut off from
 * the battery while the sense line still reads a low battery). A shorted
 * field driver (dutyFloor01 = 1) defeats it.
 */
export const REGULATOR_BPLUS_LIMIT_V = 18;
/**
 * Past the limit by this much, the regulator also quenches the field: it
 * stops freewheeling it and lets it decay against FIELD_QUENCH_V, so the
 * field collapses in tens of milliseconds instead of its own L/R time (load
 * dump protection; from memory). Not with a shorted driver.
 */
const REGULATOR_QUENCH_MARGIN_V = 1.5;
const FIELD_QUENCH_V = 20;
/** Below this the regulator sees no phase signal and only pre-excites. */
const REGULATION_MIN_ALT_RPM = 300;
const ALT_FRICTION_NM = 0.15;
/**
 * The charge lamp and its parallel resistor in the regulator's ignition feed
 * (from memory: a 2-3 W lamp with a resistor beside it): with the key on it
 * excites the field even with no voltage on B+, so an alternator cut off from
 * its battery still builds up and runs.
 */
export const LAMP_CIRCUIT_OHM = 50;
/** How much more torque a sliding belt passes per unit of slip (see stepBelt). */
export const BELT_SLIDE_GAIN = 2;
/** Slip above which a belt under load squeals. */
export const BELT_AUDIBLE_SLIP01 = 0.03;
/** Starter current below which, with the key at start, no current reaches the starter (an open circuit). */
const STARTER_OPEN_A = 5;
/** Largest shift of the clamp's zero when its jaws are opened and closed again. */
const CLAMP_RESEAT_SHIFT_A = 0.05;
/** Spread of the clamp's zero when it is switched on (a hall sensor's offset). */
const CLAMP_INITIAL_OFFSET_A = 2;

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
export interface ControlsRead {
  of: Controls | null;
  key: KeyPosition;
  heldRpm: number;
  accessoriesOn: readonly string[];
  pileDial01: number;
  ammeterInSeries: boolean;
  ammeterFusesFitted: number;
  bplusConnected: boolean;
  changes: readonly CarChange[];
  clampConductor: Conductor | null;
}

const { controlsRead } = workspace.step;

function readControls(controls: Controls): ControlsRead {
  const r = controlsRead;
  if (r.of !== controls) {
    r.of = controls;
    r.key = controls.key;
    r.heldRpm = controls.heldRpm;
    r.accessoriesOn = controls.accessoriesOn;
    r.pileDial01 = controls.pileDial01;
    r.ammeterInSeries = controls.ammeterInSeries;
    r.ammeterFusesFitted = controls.ammeterFusesFitted ?? 0;
    r.bplusConnected = controls.bplusConnected;
    r.changes = controls.changes;
    r.clampConductor = controls.clamp.conductor;
  }
  return r;
}

export interface NetworkInputs {
  model: Model;
  controls: ControlsRead;
  engineStatus: EngineStatus;
  altRpm: number;
  alternatorTempC: number;
  fieldCurrentA: number;
  fieldDuty01: number;
  /** The field is fed through the ignition and lamp circuit (else from B+). */
  fieldFromIgnition: boolean;
  soc01: number;
  /** Fast polarisation plus surface charge. */
  polarizationV: number;
  linkOpen: boolean;
  pileOn: boolean;
  ammeterFuseBlown: boolean;
  modulesAwake: boolean;
  guessBridgeA: number;
  /** The stator's standing DC current (space vector, A) of the last solution: its field saturates the iron. */
  statorDcA: number;
}

// Reused for every solve (the network copies what it keeps); never escapes this module.
const { networkInput } = workspace.step;

/**
 * The vehicle loads' conductance, remembered for the last model, key state,
 * accessories switched on and module state: these change only with an event
 * or a fault, while the step asks every 10 ms. The accessories are compared
 * by content, so an array edited in place cannot be mistaken for the last.
 */
const { loadMemo } = workspace.step;

function sameIds(a: readonly string[], b: readonly string[]): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

// Loads between the junction and the body, all as conductances: a load
// given in amperes draws that current at 12.6 V (so an open return path
// carries nothing, as in the car). With the key off only the accessories fed
// straight from the battery (headlamps) work.
function loadConductanceS(m: Model, keyOn: boolean, accessoriesOn: readonly string[], modulesAwake: boolean): number {
  const memo = loadMemo;
  if (memo.model === m && memo.keyOn === keyOn && memo.modulesAwake === modulesAwake && sameIds(memo.accessoriesOn, accessoriesOn)) {
    return memo.loadG;
  }
  const p = m.p;
  let loadG = 1e-6;
  let ratedA = 0;
  for (const id of accessoriesOn) {
    if (!keyOn && !m.accessoryKeyOff.has(id)) continue;
    loadG += m.accessoryG.get(id) ?? 0;
    ratedA += m.accessoryI.get(id) ?? 0;
  }
  if (keyOn) ratedA += p.loads.baseElectronicsA;
  else ratedA += modulesAwake ? p.loads.keyOffAwakeA : p.loads.keyOffSleepA;
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
  const emf = openCircuitVoltageV(n.soc01, p.battery.tempC, p.battery.sulfation01) + n.polarizationV;
  const cranking = c.key === 'start' && (n.engineStatus === 'cranking' || n.engineStatus === 'stalled');

  const omegaE = (m.twoPiPolePairs * n.altRpm) / 60;
  const flux = fluxWithStatorDc(m, n.fieldCurrentA, n.statorDcA);

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
  // The driver switches its supply onto the field for the duty's share of each cycle; in the rest the field
  // current freewheels inside the regulator. Either feed therefore carries the duty's share of the field current.
  ni.fieldSupplyA = n.fieldFromIgnition ? 0 : n.fieldDuty01 * n.fieldCurrentA;
  ni.ignitionFieldA = n.fieldFromIgnition ? n.fieldDuty01 * n.fieldCurrentA : 0;
  ni.openRippleRatio = m.openRippleRatio;
  ni.table = m.table;
  ni.emfPeakV = m.emfConstantVsPerRad * omegaE * flux;
  ni.reactanceOhm = omegaE * a.synchronousInductanceH;
  ni.phaseResistanceOhm = copperAt(a.statorResistanceOhmAt20C, n.alternatorTempC) + a.diodeSeriesResistanceOhm;
  ni.diode = m.diode;
  ni.guessA = n.guessBridgeA;
  return solveNetworkInto(ni, out);
}

/** Volts at a point (against the case) per ampere from the bridge. */
function transferOhm(net: NetworkSolution, atBplus: boolean, m: Model): number {
  const z = atBplus || !m.sensesBattery ? net.rippleOhm.bplus : net.rippleOhm.batteryPos;
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
    fieldFromIgnition: false,
    soc01: p.battery.initialSoc01,
    polarizationV: p.battery.initialSurfaceChargeV,
    linkOpen: p.wiring.fusibleLinkOpen,
    pileOn: true,
    ammeterFuseBlown: false,
    modulesAwake: false,
    guessBridgeA: 0,
    statorDcA: 0,
  }, blankSolution());
  // The blank state fixes the fields and their order (one shape for every state); these are the ones not zero at the start.
  return Object.assign(blankState(), {
    rngState: rng,
    controls,
    alternatorTempC: p.alternator.initialTempC,
    regulatorSetPointV: regulatorSetPointV(p, p.alternator.initialTempC),
    regulatorSenseV: senseVoltage(model, net),
    batterySoc01: clamp(p.battery.initialSoc01, 0, 1),
    batterySurfaceChargeV: p.battery.initialSurfaceChargeV,
    pileTempC: p.ambientC,
    clampOffsetA: (rngValue(rng) - 0.5) * 2 * CLAMP_INITIAL_OFFSET_A,
    net,
  });
}

// The step's operating point for solveAt, reused every step (solveAt keeps none of it).
const { stepInputs } = workspace.step;

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
    beltSlip01: 0,
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
    batterySurfaceChargeV: 0,
    batteryGassingA: 0,
    fusibleLinkHeat01: 0,
    fusibleLinkBlown: false,
    pileTempC: 0,
    pileTripped: false,
    ammeterFuseHeat01: 0,
    ammeterFuseBlown: false,
    ammeterFusesSeen: 0,
    lastAmmeterInSeries: false,
    modulesAwakeS: 0,
    engineStopCause: null,
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

// ---- Subsystem steps ----------------------------------------------------------
// Each reads the previous state (and the network solved at the end of the
// previous step) and writes its results into a scratch record; stepInto
// runs them in order, solves the network at the new operating point and
// writes the new state. The scratch records are module-level and reused:
// nothing in them outlives one call of stepInto.

export interface EngineOut {
  status: EngineStatus;
  crank: number;
  lowV: number;
  rpm: number;
  rng: number;
  cause: EngineStopCause | null;
}
const { engineOut } = workspace.step;

/** Key, starter and combustion: the engine's status and speed. */
function stepEngine(p: VehicleParams, state: SimState, c: ControlsRead, lag: number, dt: number, out: EngineOut): EngineOut {
  const prev = state.net;
  const key = c.key;
  const starterV = prev.nodeV.junction - prev.nodeV.engine;
  const supplyV = prev.nodeV.junction - prev.nodeV.chassis;
  let status = state.engineStatus;
  let crank = state.crankProgress01;
  let lowV = state.engineLowVoltageS;
  let cause = state.engineStopCause;
  let rng = state.rngState;
  if (key === 'off') {
    status = 'off';
    crank = 0;
    lowV = 0;
    cause = null;
  } else if (key === 'start') {
    if (status === 'off' || (status === 'stalled' && state.lastKey !== 'start')) {
      status = 'cranking';
      crank = 0;
      lowV = 0;
      cause = null;
    } else if (status === 'cranking') {
      if (starterV >= p.engine.minCrankVoltageV) {
        crank += dt / p.engine.crankToStartS;
        lowV = 0;
      } else {
        lowV += dt;
        if (lowV > 0.5) {
          status = 'stalled';
          // No current through the starter at all is an open circuit, not a weak battery.
          cause = prev.branchA.starter < STARTER_OPEN_A ? 'starter-circuit-open' : 'starter-voltage-low';
        }
      }
      if (crank >= 1) {
        status = 'running';
        lowV = 0;
        cause = null;
      }
    }
  } else if (status === 'cranking') {
    // Key on: a crank released before the engine fired leaves it stopped.
    status = 'off';
    crank = 0;
  }
  if (status === 'running') {
    if (supplyV < ENGINE_DIES_BELOW_V) {
      lowV += dt;
      if (lowV > 0.5) {
        status = 'stalled';
        cause = 'supply-lost';
      }
    } else lowV = 0;
  }
  let targetRpm = 0;
  if (status === 'running') targetRpm = clamp(Math.max(p.engine.idleRpm, c.heldRpm), p.engine.idleRpm, p.engine.maxHeldRpm);
  else if (status === 'cranking') targetRpm = clamp((p.engine.crankRpm * starterV) / 10, 0, 1.5 * p.engine.crankRpm);
  let rpm = state.engineRpm + (targetRpm - state.engineRpm) * lag;
  if (status === 'running') {
    rng = nextRngState(rng);
    // Combustion makes the speed flicker by a few rpm.
    rpm += (rngValue(rng) - 0.5) * 6;
  }
  if (rpm < 0.5 && targetRpm === 0) rpm = 0;
  out.status = status;
  out.crank = crank;
  out.lowV = lowV;
  out.rpm = rpm;
  out.rng = rng;
  out.cause = cause;
  return out;
}

const RPM_TO_RAD_S = (2 * Math.PI) / 60;

/**
 * The belt: torque passed = grip x tanh(slip / creep) x (1 + BELT_SLIDE_GAIN
 * x slip), slip = 1 - alternator speed / belt speed. It creeps a little under
 * any load (a fraction of a per cent with a good belt), more as the torque
 * asked nears the grip, and slides beyond it; a sliding belt passes somewhat
 * more torque the faster it slides (a modelling choice: so the slip a belt
 * settles at depends only on the load and the speed now, never on what came
 * before, and a belt that slid under a heavy load at idle grips again once
 * the load is off). The rotor's inertia carries it through. Solved
 * implicitly for the new alternator speed (Newton on a monotone function),
 * so a stiff good belt and a slack worn one both step stably.
 */
function stepBelt(p: VehicleParams, syncRpm: number, altRpm: number, loadTorqueNm: number, dt: number): number {
  const grip = p.belt.gripNm;
  const creep = p.belt.creep01 > 1e-4 ? p.belt.creep01 : 1e-4;
  const ws = syncRpm * RPM_TO_RAD_S;
  if (!(ws > 1)) return syncRpm;
  const w0 = altRpm * RPM_TO_RAD_S;
  const inertia = ALTERNATOR_INERTIA_KGM2 / dt;
  // f(w) = J (w - w0)/dt - T_belt(w) + T_load, increasing in w (T_belt falls as w rises).
  let lo = 0;
  let hi = ws * (1 + 3 * creep) + (dt * grip * (1 + BELT_SLIDE_GAIN)) / ALTERNATOR_INERTIA_KGM2;
  let w = w0 > lo && w0 < hi ? w0 : ws;
  for (let i = 0; i < 30; i++) {
    const slip = (ws - w) / ws;
    const th = detTanh(slip / creep);
    const grow = 1 + BELT_SLIDE_GAIN * (slip > 0 ? slip : -slip);
    const f = inertia * (w - w0) - grip * th * grow + loadTorqueNm;
    if (f > 0) hi = w;
    else lo = w;
    // dT_belt/dw = -(grip / ws) (sech^2 / creep x grow + tanh x gain x sign(slip)).
    const df = inertia + (grip / ws) * ((1 - th * th) / creep * grow + th * BELT_SLIDE_GAIN * (slip > 0 ? 1 : -1));
    let next = w - f / df;
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    // Newton converges quadratically from last step's speed: a correction this small leaves an error far smaller.
    if (Math.abs(next - w) < 1e-5 * ws) {
      w = next;
      break;
    }
    w = next;
  }
  return w > 0 ? w / RPM_TO_RAD_S : 0;
}

export interface FieldOut {
  duty: number;
  integral: number;
  setPointV: number;
  currentA: number;
  fromIgnition: boolean;
}
const { fieldOut } = workspace.step;

/** The field current a supply drives through a resistance at a duty: the driver switches the supply onto the field (the average over its cycle). */
function fieldDrive(duty: number, supplyV: number, freewheelV: number, rOhm: number): number {
  const v = duty * (supplyV > FIELD_DRIVER_DROP_V ? supplyV - FIELD_DRIVER_DROP_V : 0) - (1 - duty) * freewheelV;
  return v > 0 ? v / rOhm : 0;
}

/**
 * The regulator and the field winding. The regulator holds its sense point
 * at the set point by a PI law on the field duty, and its own B+ stud at or
 * below REGULATOR_BPLUS_LIMIT_V; whichever asks less field wins.
 *
 * The field is fed as the trade wires the two common kinds of unit:
 *  - a regulator sensing the battery through its own wire feeds the field
 *    from that side too (the battery feed switched on by the ignition, as in
 *    units whose sense wire also carries the field current), so the field
 *    does not follow the B+ stud: a resistive charging cable lowers the
 *    output instead of lifting the field, and an alternator cut off from
 *    its battery is still excited;
 *  - a regulator sensing its own B+ (or whose sense wire is broken) feeds
 *    the field from B+, and the ignition feed through the charge lamp
 *    excites it when B+ has nothing to give (a diode OR: the higher feed
 *    supplies), so it builds up from rest even with the charging lead open.
 */
function stepRegulatorAndField(model: Model, state: SimState, keyOn: boolean, altRpm: number, dt: number, out: FieldOut): FieldOut {
  const p = model.p;
  const prev = state.net;
  const setPointV = regulatorSetPointV(p, state.alternatorTempC);
  const bplusV = prev.nodeV.bplus - prev.nodeV.altCase;
  let integral = state.regulatorIntegral01;
  let duty: number;
  if (!keyOn) {
    duty = 0;
    integral = 0;
  } else if (altRpm < REGULATION_MIN_ALT_RPM) {
    duty = p.regulator.preExcitationDuty01;
    integral = duty;
  } else {
    // The averaged switching regulator as a PI controller on the more
    // pressing of its two errors. Its loop gain grows with how hard the
    // point it holds moves per ampere of output, so the gains are scaled by
    // that (known from the last solution) to keep it stable with a stiff
    // battery, a resistive cable or a B+ cut off from the battery alike.
    const senseErr = setPointV - state.regulatorSenseV;
    const limitErr = REGULATOR_BPLUS_LIMIT_V - bplusV;
    const onLimit = limitErr < senseErr;
    const err = onLimit ? limitErr : senseErr;
    // Scaled by the larger of the two points' sensitivities: the law switches between them, and a sense loop
    // tuned only to its own point (a battery that no longer responds, the charging lead open) would drive the
    // field at full gain straight past the B+ limit.
    const sensitivity = clamp(Math.max(transferOhm(prev, onLimit, model), transferOhm(prev, true, model)), 1e-3, REGULATOR_SENSITIVITY_CAP_OHM);
    const scale = Math.min(1, REGULATOR_REFERENCE_OHM / sensitivity);
    integral = clamp(integral + REGULATOR_KI_PER_VS * scale * err * dt, 0, 1);
    duty = clamp(integral + REGULATOR_KP_PER_V * scale * err, 0, 1);
  }
  if (keyOn) duty = Math.max(duty, p.regulator.dutyFloor01);
  const rField = fieldResistanceOhm(model, state.alternatorTempC);
  const freewheel = state.fieldCurrentA > 0.01 ? FIELD_FREEWHEEL_V : 0;
  const batterySideV = keyOn ? prev.nodeV.junction - prev.nodeV.altCase : 0;
  const fromBplus = model.sensesBattery ? 0 : fieldDrive(duty, bplusV, freewheel, rField);
  // Battery-fed units take the field straight from the battery side; B+-fed units only through the lamp circuit.
  const rIgnition = model.sensesBattery ? rField : rField + LAMP_CIRCUIT_OHM;
  const fromIgnition = fieldDrive(duty, batterySideV, freewheel, rIgnition);
  const useIgnition = fromIgnition > fromBplus || model.sensesBattery;
  const r = useIgnition ? rIgnition : rField;
  const quench = keyOn && bplusV > REGULATOR_BPLUS_LIMIT_V + REGULATOR_QUENCH_MARGIN_V && p.regulator.dutyFloor01 < 1;
  const target = quench ? -FIELD_QUENCH_V / r : useIgnition ? fromIgnition : fromBplus;
  const decay = detExp((-dt * r) / p.alternator.fieldInductanceH);
  const current = target + (state.fieldCurrentA - target) * decay;
  out.duty = quench ? 0 : duty;
  // After a quench the regulator starts over from no field (its soft start), so it does not drive straight back into the limit.
  out.integral = quench ? 0 : integral;
  out.setPointV = setPointV;
  out.currentA = current > 0 ? current : 0;
  out.fromIgnition = useIgnition;
  return out;
}

const { batteryOut, protectionOut, lampOut, clampOut } = workspace.step;

export interface ProtectionOut {
  alternatorTempC: number;
  linkHeat01: number;
  linkBlown: boolean;
  fuseHeat01: number;
  fuseBlown: boolean;
  pileTempC: number;
  pileTripped: boolean;
  modulesAwakeS: number;
}

/**
 * Temperatures and protection: the alternator's winding heat, the fusible
 * link, the series ammeter's fuse, the carbon pile's heat and cut-out, and
 * the modules' sleep timer, all from the last step's currents.
 */
function stepHeatAndProtection(model: Model, state: SimState, c: ControlsRead, keyOn: boolean, decay: Decays, dt: number, out: ProtectionOut): ProtectionOut {
  const p = model.p;
  const prev = state.net;
  // The winding heats with the stator's copper loss (its phase currents, not the output: a bridge fault
  // that makes a phase carry a standing DC current heats it more for the same output).
  const copperFraction = prev.statorSquaresA2 / model.ratedStatorSquaresA2;
  const altHotC = model.underhoodC + p.alternator.fullLoadTempRiseC * copperFraction;
  out.alternatorTempC = altHotC + (state.alternatorTempC - altHotC) * decay.alternatorThermal;

  const linkA = prev.branchA.bplusCable;
  const linkRatio = linkA / p.wiring.fusibleLinkRatingA;
  const linkTarget = linkRatio * linkRatio;
  const linkHeat = linkTarget + (state.fusibleLinkHeat01 - linkTarget) * decay.link;
  out.linkHeat01 = linkHeat;
  out.linkBlown = state.fusibleLinkBlown || linkHeat >= 1;

  // The series ammeter's fuse: heats like the link, blows when overloaded, and stays blown until a new one is fitted.
  const newFuse = c.ammeterFusesFitted !== state.ammeterFusesSeen;
  const ammeterA = c.ammeterInSeries ? prev.branchA.negCable : 0;
  const fuseRatio = ammeterA / AMMETER_FUSE_A;
  const fuseTarget = fuseRatio * fuseRatio;
  const fuseHeat = fuseTarget + ((newFuse ? 0 : state.ammeterFuseHeat01) - fuseTarget) * decay.ammeterFuse;
  out.fuseHeat01 = fuseHeat;
  out.fuseBlown = (!newFuse && state.ammeterFuseBlown) || (c.ammeterInSeries && fuseHeat >= 1);

  const pileW = prev.nodeV.batteryPos * prev.branchA.pile;
  const pileTempC =
    state.pileTempC + (dt * (pileW - p.pile.coolingWPerC * (state.pileTempC - p.ambientC))) / p.pile.heatCapacityJPerC;
  let pileTripped = state.pileTripped;
  if (!pileTripped && pileTempC > p.pile.tripC) pileTripped = true;
  else if (pileTripped && c.pileDial01 === 0 && pileTempC < p.pile.resetC) pileTripped = false;
  out.pileTempC = pileTempC;
  out.pileTripped = pileTripped;

  // Modules wake with the key on, or when the battery circuit is broken and remade.
  out.modulesAwakeS = keyOn || c.ammeterInSeries !== state.lastAmmeterInSeries ? p.loads.moduleSleepDelayS : Math.max(0, state.modulesAwakeS - dt);
  return out;
}

export interface LampOut {
  senseV: number;
  lowChargeS: number;
  lamp: boolean;
}

/**
 * The charge warning lamp: lit with the key on and the engine not running,
 * and once running when the regulator cannot hold its set point (or B+
 * strays from its sense point) for more than two seconds.
 */
function stepChargeLamp(model: Model, state: SimState, keyOn: boolean, engineStatus: EngineStatus, setPointV: number, net: NetworkSolution, dt: number, out: LampOut): LampOut {
  const newSenseV = senseVoltage(model, net);
  const portV = net.nodeV.bplus - net.nodeV.altCase;
  let lowChargeS = state.lowChargeS;
  let lamp = false;
  if (keyOn) {
    if (engineStatus !== 'running') {
      lamp = true;
      lowChargeS = 0;
    } else {
      const cannotHold =
        newSenseV < setPointV - 0.5 || newSenseV > 16 || portV > REGULATOR_BPLUS_LIMIT_V - 0.5 || portV < newSenseV - 1.5 || portV > newSenseV + 1.5;
      lowChargeS = cannotHold ? Math.min(5, lowChargeS + dt) : Math.max(0, lowChargeS - 4 * dt);
      lamp = lowChargeS > 2;
    }
  } else lowChargeS = 0;
  out.senseV = newSenseV;
  out.lowChargeS = lowChargeS;
  out.lamp = lamp;
  return out;
}

export interface ClampOut {
  offsetA: number;
  rngState: number;
}

/** The clamp's zero: reseating the jaws on another conductor shifts the hall sensor's zero a little (a draw of the run's generator). */
function stepClampZero(state: SimState, c: ControlsRead, rngState: number, out: ClampOut): ClampOut {
  let rng = rngState;
  let clampOffsetA = state.clampOffsetA;
  if (c.clampConductor !== state.clampConductorSeen) {
    rng = nextRngState(rng);
    clampOffsetA += (rngValue(rng) - 0.5) * 2 * CLAMP_RESEAT_SHIFT_A;
  }
  out.offsetA = clampOffsetA;
  out.rngState = rng;
  return out;
}

/** The torque the alternator asks of the belt at its speed and output (its losses through its efficiency, and friction). */
function alternatorTorqueNm(p: VehicleParams, altRpm: number, net: NetworkSolution): number {
  const omegaAlt = altRpm * RPM_TO_RAD_S;
  const portV = net.nodeV.bplus - net.nodeV.altCase;
  return omegaAlt > 1 ? (Math.max(0, portV * net.bridgeCurrentA) / p.alternator.efficiency01) / omegaAlt + ALT_FRICTION_NM : 0;
}

/**
 * The step written into `out` instead of a new state, for callers that keep
 * only the last of many steps (replay's advance): `out` may be `state`
 * itself. Everything is read from `state` (and its network) before anything
 * of `out` is written: the network is solved into `out.net` once the
 * previous solution has been read, and the other fields are written last.
 * Each subsystem is its own step, in this order: engine and belt, regulator
 * and field, heat and protection, battery, the network at the new operating
 * point, then what follows from it (belt torque, charge lamp, clamp zero).
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
  const decay = decaysFor(model, dt);

  // ---- Engine, belt and alternator speed --------------------------------------
  const engine = stepEngine(p, state, c, 1 - decay.engine, dt, engineOut);
  const syncRpm = engine.rpm * p.belt.pulleyRatio;
  const altRpm = stepBelt(p, syncRpm, state.altRpm, state.altTorqueNm, dt);
  const beltSlip01 = syncRpm > 1 ? (syncRpm - altRpm) / syncRpm : 0;

  // ---- Regulator and field ---------------------------------------------------
  const field = stepRegulatorAndField(model, state, keyOn, altRpm, dt, fieldOut);

  // ---- Temperatures, fuses, battery charge -----------------------------------
  const guard = stepHeatAndProtection(model, state, c, keyOn, decay, dt, protectionOut);
  const battery = stepBattery(
    p.battery,
    { soc01: state.batterySoc01, fastV: state.batteryPolarizationV, surfaceV: state.batterySurfaceChargeV },
    prev.branchA.battery,
    internalResistanceOhm(p.battery, state.batterySoc01),
    model.capacityAs,
    dt,
    batteryOut,
  );

  // ---- The network at the new operating point -------------------------------
  const at = stepInputs;
  at.model = model;
  at.controls = c;
  at.engineStatus = engine.status;
  at.altRpm = altRpm;
  at.alternatorTempC = guard.alternatorTempC;
  at.fieldCurrentA = field.currentA;
  at.fieldDuty01 = field.duty;
  at.fieldFromIgnition = field.fromIgnition;
  at.soc01 = battery.soc01;
  at.polarizationV = battery.fastV + battery.surfaceV;
  at.linkOpen = guard.linkBlown || p.wiring.fusibleLinkOpen;
  at.pileOn = !guard.pileTripped;
  at.ammeterFuseBlown = guard.fuseBlown;
  at.modulesAwake = guard.modulesAwakeS > 0;
  at.guessBridgeA = prev.bridgeCurrentA;
  at.statorDcA = prev.statorDcA;
  // From here on `prev` (which may be out.net) is not read again.
  const net = solveAt(at, out.net);

  // ---- What follows from it: belt torque, charge lamp, clamp zero -------------
  const altTorqueNm = alternatorTorqueNm(p, altRpm, net);
  const lamp = stepChargeLamp(model, state, keyOn, engine.status, field.setPointV, net, dt, lampOut);
  const clampZero = stepClampZero(state, c, engine.rng, clampOut);

  out.timeMs = timeMs;
  out.rngState = clampZero.rngState;
  out.controls = controls;
  out.engineStatus = engine.status;
  out.engineRpm = engine.rpm;
  out.crankProgress01 = engine.crank;
  out.engineLowVoltageS = engine.lowV;
  out.lastKey = key;
  out.altRpm = altRpm;
  out.beltSlip01 = beltSlip01;
  out.beltSlipping = beltSlip01 > BELT_AUDIBLE_SLIP01;
  out.altTorqueNm = altTorqueNm;
  out.alternatorTempC = guard.alternatorTempC;
  out.fieldCurrentA = field.currentA;
  out.fieldDuty01 = field.duty;
  out.regulatorIntegral01 = field.integral;
  out.regulatorSetPointV = field.setPointV;
  out.regulatorSenseV = lamp.senseV;
  out.batterySoc01 = battery.soc01;
  out.batteryPolarizationV = battery.fastV;
  out.batterySurfaceChargeV = battery.surfaceV;
  out.batteryGassingA = battery.gassingA;
  out.fusibleLinkHeat01 = guard.linkBlown ? Math.max(1, guard.linkHeat01) : guard.linkHeat01;
  out.fusibleLinkBlown = guard.linkBlown;
  out.pileTempC = guard.pileTempC;
  out.pileTripped = guard.pileTripped;
  out.ammeterFuseHeat01 = guard.fuseHeat01;
  out.ammeterFuseBlown = guard.fuseBlown;
  out.ammeterFusesSeen = c.ammeterFusesFitted;
  out.lastAmmeterInSeries = c.ammeterInSeries;
  out.modulesAwakeS = guard.modulesAwakeS;
  out.engineStopCause = engine.cause;
  out.chargeWarning = lamp.lamp;
  out.lowChargeS = lamp.lowChargeS;
  out.clampOffsetA = clampZero.offsetA;
  out.clampConductorSeen = c.clampConductor;
  // out.net already holds `net` (solved into it above).
  return out;
}
