/**
 * The model's working memory, in one place: every object that sim/ keeps
 * between calls, what it holds and why keeping it is safe.
 *
 * The step is pure in what it promises (`step(params, state, controls)` gives
 * the same next state for the same arguments, on every engine), but it runs
 * every 10 ms in the browser and millions of times when the server re-runs a
 * class's attempts, so it neither allocates nor recomputes what it already
 * knows. What it keeps falls into three kinds, each safe for its own reason:
 *
 *  - **Scratch records** (`scratch`): out-parameters and input records that a
 *    function fills completely and reads within the same call, then leaves.
 *    JavaScript runs one call at a time on a thread, nothing in sim/ awaits or
 *    calls back into other code while one is in use, and no function returns
 *    one of them to its caller (each copies out what it gives), so no caller
 *    can see another's values. A worker thread has its own copy of this module.
 *  - **Last-call memos** (`memo`): the answer of the last call, kept with
 *    every input it was computed from and returned only when all of them are
 *    the same (by value, or by identity for objects that are never edited),
 *    so a hit gives the very bits a fresh computation would.
 *  - **Caches of pure functions** (`cache`): bridge characteristics, sine
 *    tables, compiled models and network responses, keyed by everything they
 *    depend on and never changed once stored. They cost time once per
 *    process; what they return is the same whichever run first asked.
 *
 * Nothing here is part of a state, a snapshot or a digest: a run's results
 * depend only on its params, seed, events and changes. The golden runs
 * (tests/sim/golden-runs.test.ts) replay attempts in different orders within
 * one process and must give the same digests, which would catch a scratch
 * value leaking from one run into another. tests/sim/workspace.test.ts
 * checks that no other module of sim/ declares a mutable object of its own.
 *
 * Two typed-array word views stay beside the bit-level math that uses them
 * (det-math.ts, bridge.ts's table logarithm): each is written and read within
 * a single expression's evaluation, like a register.
 */
import type { BatteryState } from './battery.ts';
import type { BridgePoint, BridgePointInput, BridgeTable, Column, Placement, TableLookup, TangentResult } from './bridge.ts';
import type { CarChange } from './car-changes.ts';
import type { Model } from './model.ts';
import type { LinearResponses, NetworkInput } from './network.ts';
import type { VehicleParams } from './params.ts';
import type { SimState } from './step.ts';
import type { ClampOut, ControlsRead, EngineOut, FieldOut, LampOut, NetworkInputs, ProtectionOut } from './step.ts';

/** The network's matrix sizes (network.ts checks them against its own node and branch lists). */
export const NETWORK_NODES = 6;
export const NETWORK_COLUMNS = 3;
export const NETWORK_CONDUCTANCES = 10;

const diode = () => ({ saturationCurrentA: 1e-7, emissionCoefficient: 1.6 });

export const workspace = {
  /** The step (step.ts). */
  step: {
    /** scratch: the controls object's fields copied into one shape (readControls), refreshed whenever the controls object changes. */
    controlsRead: {
      of: null,
      key: 'off',
      heldRpm: 0,
      accessoriesOn: [],
      pileDial01: 0,
      ammeterInSeries: false,
      ammeterFusesFitted: 0,
      bplusConnected: true,
      changes: [],
      clampConductor: null,
    } as ControlsRead,
    /** scratch: the operating point handed to solveAt. */
    stepInputs: {
      model: null as unknown as Model,
      controls: null as unknown as ControlsRead,
      engineStatus: 'off',
      altRpm: 0,
      alternatorTempC: 0,
      fieldCurrentA: 0,
      fieldDuty01: 0,
      fieldFromIgnition: false,
      soc01: 0,
      polarizationV: 0,
      linkOpen: false,
      pileOn: true,
      ammeterFuseBlown: false,
      modulesAwake: false,
      guessBridgeA: 0,
      statorDcA: 0,
    } as NetworkInputs,
    /** scratch: the network's inputs, filled by solveAt (the network copies what it keeps). */
    networkInput: {
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
      ignitionFieldA: 0,
      openRippleRatio: 0,
      table: null as unknown as BridgeTable,
      emfPeakV: 0,
      reactanceOhm: 1,
      phaseResistanceOhm: 0,
      diode: diode(),
      guessA: 0,
    } as NetworkInput,
    /** memo: the loads' conductance for the last model, key state, accessories (by content) and module state. */
    loadMemo: { model: null as Model | null, keyOn: false, modulesAwake: false, accessoriesOn: [] as string[], loadG: 0 },
    /** scratch: the engine's, the field's and the battery's results within one step. */
    engineOut: { status: 'off', crank: 0, lowV: 0, rpm: 0, rng: 0, cause: null } as EngineOut,
    fieldOut: { duty: 0, integral: 0, setPointV: 0, currentA: 0, fromIgnition: false } as FieldOut,
    batteryOut: { soc01: 0, fastV: 0, surfaceV: 0, gassingA: 0 } as BatteryState,
    protectionOut: { alternatorTempC: 0, linkHeat01: 0, linkBlown: false, fuseHeat01: 0, fuseBlown: false, pileTempC: 0, pileTripped: false, modulesAwakeS: 0 } as ProtectionOut,
    lampOut: { senseV: 0, lowChargeS: 0, lamp: false } as LampOut,
    clampOut: { offsetA: 0, rngState: 0 } as ClampOut,
  },

  /** The battery (battery.ts). */
  battery: {
    /** memos: exp(k (25 - T)) for the resistance and the charge acceptance, keyed on k and T. */
    resistanceMemo: { k: Number.NaN, tempC: Number.NaN, value: 1 },
    acceptanceMemo: { k: Number.NaN, tempC: Number.NaN, value: 1 },
    /** memo: the full-charge resistance, keyed on its three inputs. */
    fullResistanceMemo: { r25: Number.NaN, ageYears: Number.NaN, tempC: Number.NaN, value: 0 },
    /** memo: the gassing branch's constants, keyed on capacity and temperature. */
    gassingMemo: { capacityAh: Number.NaN, tempC: Number.NaN, i0: 0, v0: 0 },
    /** scratch: the gassing current and its slope within one battery step. */
    gas: { currentA: 0, slopeSPerV: 0 },
  },

  /** The rectifier bridge (bridge.ts). */
  bridge: {
    /** scratch: one cycle's ends and mean (table building). */
    tangent: { endA: 0, endB: 0, mean: 0 } as TangentResult,
    /** scratch: where a value falls on a table axis, its column, roots and placement (table lookups). */
    locate: { i: 0, t: 0 },
    column: { iu: 0, tu: 0, inverseDu: 1 } as Column,
    root: { root: 0, slope: 0 },
    root2: { root: 0, slope: 0 },
    place: { is: 0, ts: 0, li: 0, tl: 0, b: 0, rho: 0 } as Placement,
    pointPlace: { is: 0, ts: 0, li: 0, tl: 0, b: 0, rho: 0 } as Placement,
    lookup: { mean: 0, dMeanDu: 0, acRms: 0, dominant: 6, phaseSquares: 0, dcVector: 0 } as TableLookup,
    /** memo: the diode drop at the last current asked, keyed on the current and the diode's two constants. */
    dropMemo: { currentA: Number.NaN, saturationCurrentA: Number.NaN, nvt: Number.NaN, dropV: 0 },
  },

  /** The DC network (network.ts). */
  network: {
    /** scratch: the nodal matrix and right-hand sides while the responses are solved. */
    mat: new Float64Array(NETWORK_NODES * NETWORK_NODES),
    rhs: new Float64Array(NETWORK_NODES * NETWORK_COLUMNS),
    /** scratch: the conductances of this solve, compared with the cached responses' keys. */
    keyScratch: new Float64Array(NETWORK_CONDUCTANCES),
    /** scratch: the bridge's operating point and its inputs within one solve. */
    point: { meanA: 0, acRmsA: 0, dominantHarmonic: 6, dcV: 0, phaseSquaresA2: 0, statorDcA: 0 } as BridgePoint,
    bridgeInput: {
      table: null as unknown as BridgeTable,
      emfPeakV: 0,
      reactanceOhm: 0,
      phaseResistanceOhm: 0,
      diode: diode(),
      dcTheveninV: 0,
      dcResistanceOhm: 0,
      guessA: 0,
    } as BridgePointInput,
  },

  /** Replays (replay.ts). */
  replay: {
    /** scratch: the state the steps before the last of an `advance` are written into (only the last step makes the state returned). Made on first use. */
    workingState: null as SimState | null,
  },

  /** Caches of pure functions, kept for the process. */
  cache: {
    /** Bridge characteristics by topology key (bridge.ts bridgeTable): hundreds of milliseconds each to build. */
    bridgeTables: new Map<string, BridgeTable>(),
    /** Open-circuit ripple ratio by topology key. */
    openRippleRatios: new Map<string, number>(),
    /** sin and harmonic tables by steps per cycle (table building). */
    sineTables: new Map<number, Float64Array>(),
    harmonicTables: new Map<number, { cos: Float64Array; sin: Float64Array }>(),
    /** Compiled models by params object (model.ts), a few change sets each; the params objects are never edited. */
    models: new WeakMap<VehicleParams, { changes: readonly CarChange[]; mask: number; model: Model }[]>(),
    /** memo: the last model asked for (keyed on params, change list and active set). */
    lastModel: { params: null as VehicleParams | null, changes: [] as readonly CarChange[], mask: -1, model: null as unknown as Model },
    /** The network's responses for the last few sets of conductances, most recently used first. */
    recentResponses: [] as LinearResponses[],
  },
};
