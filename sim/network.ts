/**
 * The car's DC network as named nodes and branches, the part of the model the
 * instruments read and the KCL check walks. Voltages are against the battery
 * negative post (V); branch currents are positive from `from` to `to` (A).
 *
 *   battery   battery-neg post -> battery-pos post (through the cells; + is discharge)
 *   pile      battery-pos post -> battery-neg post (carbon pile clipped on the posts)
 *   posCable  battery-pos post -> positive junction (jump post, fuse box, starter feed)
 *   bplusCable alternator B+ stud -> positive junction (fusible link inside)
 *   alternator alternator case -> B+ stud (net output through the machine)
 *   mount     engine block -> alternator case (mounting bolts)
 *   strap     body (chassis) -> engine block (ground strap)
 *   negCable  chassis -> battery-neg post (through the series ammeter when fitted)
 *   loads     positive junction -> chassis (vehicle loads)
 *   starter   positive junction -> engine block (starter motor)
 */

import type { BridgePoint, BridgePointInput, BridgeTable, DiodeShockley } from './bridge.ts';
import { bridgeOperatingPoint } from './bridge.ts';

export type NodeName = 'batteryPos' | 'junction' | 'bplus' | 'altCase' | 'engine' | 'chassis' | 'batteryNeg';

export type BranchName =
  | 'battery'
  | 'pile'
  | 'posCable'
  | 'bplusCable'
  | 'alternator'
  | 'mount'
  | 'strap'
  | 'negCable'
  | 'loads'
  | 'starter';

export const NODE_NAMES: readonly NodeName[] = ['batteryPos', 'junction', 'bplus', 'altCase', 'engine', 'chassis', 'batteryNeg'];

export const NETWORK_BRANCHES: Readonly<Record<BranchName, { from: NodeName; to: NodeName }>> = {
  battery: { from: 'batteryNeg', to: 'batteryPos' },
  pile: { from: 'batteryPos', to: 'batteryNeg' },
  posCable: { from: 'batteryPos', to: 'junction' },
  bplusCable: { from: 'bplus', to: 'junction' },
  alternator: { from: 'altCase', to: 'bplus' },
  mount: { from: 'engine', to: 'altCase' },
  strap: { from: 'chassis', to: 'engine' },
  negCable: { from: 'chassis', to: 'batteryNeg' },
  loads: { from: 'junction', to: 'chassis' },
  starter: { from: 'junction', to: 'engine' },
};

export type NodeVoltages = Record<NodeName, number>;
export type BranchCurrents = Record<BranchName, number>;

/** The solved network at the end of a step. */
export interface NetworkSolution {
  nodeV: NodeVoltages;
  branchA: BranchCurrents;
  /** AC volts at each node per ampere (rms) of ripple current from the rectifier. */
  rippleOhm: NodeVoltages;
  /** Gross rectifier output (before the field's own supply and leakage). */
  bridgeCurrentA: number;
  /** Field supply taken from B+ inside the alternator. */
  fieldSupplyA: number;
  /** RMS of the AC part of the rectifier's output current. */
  rippleCurrentRmsA: number;
  /** Largest AC component of the output, as a multiple of the electrical frequency (6 healthy). */
  rippleHarmonic: number;
}

/** Sum of currents into each node (A); every entry is ~0 when KCL holds. */
export function kclResidualsA(net: NetworkSolution): NodeVoltages {
  const r: NodeVoltages = { batteryPos: 0, junction: 0, bplus: 0, altCase: 0, engine: 0, chassis: 0, batteryNeg: 0 };
  for (const name of Object.keys(NETWORK_BRANCHES) as BranchName[]) {
    const { from, to } = NETWORK_BRANCHES[name];
    const i = net.branchA[name];
    r[from] -= i;
    r[to] += i;
  }
  return r;
}

export interface NetworkInput {
  batteryEmfV: number;
  batteryR: number;
  pileG: number;
  posG: number;
  bplusG: number;
  /** Inside the alternator, B+ to case: the regulator's electronics and any leakage. */
  internalG: number;
  mountG: number;
  strapG: number;
  negG: number;
  loadG: number;
  starterG: number;
  /** Field current drawn from B+ inside the alternator. */
  fieldSupplyA: number;
  table: BridgeTable;
  emfPeakV: number;
  reactanceOhm: number;
  phaseResistanceOhm: number;
  diode: DiodeShockley;
  guessA: number;
}

// Unknown nodes, in matrix order; the battery negative post is the reference.
const N = 6;
const BP = 0;
const JN = 1;
const BPL = 2;
const AC = 3;
const EN = 4;
const CH = 5;
const CONDUCTANCES = 10;

/**
 * The linear network's responses for one set of conductances: node voltages
 * per volt of battery EMF and per ampere from the bridge (which is also the
 * AC transfer for ripple).
 * Conductances change only when a control or a fault does, so the step
 * usually reuses these and solves nothing but the bridge's scalar equation.
 */
interface LinearResponses {
  key: Float64Array;
  perEmf: Float64Array;
  perBridgeA: Float64Array;
  rippleOhm: NodeVoltages;
}

const mat = new Float64Array(N * N);
const rhs = new Float64Array(N * 2);
const point: BridgePoint = { meanA: 0, acRmsA: 0, dominantHarmonic: 6, dcV: 0 };
/**
 * The responses of the last few sets of conductances, most recently used
 * first. A pile stepped through a handful of settings comes back to each of
 * them, so this keeps more than the two or three a single change needs.
 */
const recent: LinearResponses[] = [];
const RECENT_MAX = 8;
const keyScratch = new Float64Array(CONDUCTANCES);

function stamp(i: number, j: number, g: number): void {
  mat[i * N + i] = mat[i * N + i]! + g;
  mat[j * N + j] = mat[j * N + j]! + g;
  mat[i * N + j] = mat[i * N + j]! - g;
  mat[j * N + i] = mat[j * N + i]! - g;
}

function buildResponses(n: NetworkInput, key: Float64Array): LinearResponses {
  mat.fill(0);
  rhs.fill(0);
  const gb = 1 / n.batteryR;
  mat[BP * N + BP] = gb + n.pileG;
  stamp(BP, JN, n.posG);
  stamp(JN, BPL, n.bplusG);
  stamp(BPL, AC, n.internalG);
  stamp(AC, EN, n.mountG);
  stamp(EN, CH, n.strapG);
  mat[CH * N + CH] = mat[CH * N + CH]! + n.negG;
  stamp(JN, CH, n.loadG);
  stamp(JN, EN, n.starterG);
  // Two right-hand sides side by side: unit battery EMF, unit bridge current.
  rhs[BP * 2] = gb;
  rhs[BPL * 2 + 1] = 1;
  rhs[AC * 2 + 1] = -1;
  // Gaussian elimination; the conductance matrix is symmetric positive definite.
  for (let k = 0; k < N; k++) {
    const pivot = mat[k * N + k]!;
    for (let i = k + 1; i < N; i++) {
      const f = mat[i * N + k]! / pivot;
      if (f === 0) continue;
      for (let j = k; j < N; j++) mat[i * N + j] = mat[i * N + j]! - f * mat[k * N + j]!;
      for (let c = 0; c < 2; c++) rhs[i * 2 + c] = rhs[i * 2 + c]! - f * rhs[k * 2 + c]!;
    }
  }
  for (let k = N - 1; k >= 0; k--) {
    const d = mat[k * N + k]!;
    for (let c = 0; c < 2; c++) {
      let sum = rhs[k * 2 + c]!;
      for (let j = k + 1; j < N; j++) sum -= mat[k * N + j]! * rhs[j * 2 + c]!;
      rhs[k * 2 + c] = sum / d;
    }
  }
  const perEmf = new Float64Array(N);
  const perBridgeA = new Float64Array(N);
  for (let k = 0; k < N; k++) {
    perEmf[k] = rhs[k * 2]!;
    perBridgeA[k] = rhs[k * 2 + 1]!;
  }
  return {
    key: new Float64Array(key),
    perEmf,
    perBridgeA,
    rippleOhm: Object.freeze({
      batteryPos: perBridgeA[BP]!,
      junction: perBridgeA[JN]!,
      bplus: perBridgeA[BPL]!,
      altCase: perBridgeA[AC]!,
      engine: perBridgeA[EN]!,
      chassis: perBridgeA[CH]!,
      batteryNeg: 0,
    }),
  };
}

function responsesFor(n: NetworkInput): LinearResponses {
  const key = keyScratch;
  key[0] = n.batteryR;
  key[1] = n.pileG;
  key[2] = n.posG;
  key[3] = n.bplusG;
  key[4] = n.internalG;
  key[5] = n.mountG;
  key[6] = n.strapG;
  key[7] = n.negG;
  key[8] = n.loadG;
  key[9] = n.starterG;
  for (let r = 0; r < recent.length; r++) {
    const cand = recent[r]!;
    let same = true;
    for (let k = 0; k < CONDUCTANCES; k++) {
      if (cand.key[k] !== key[k]) {
        same = false;
        break;
      }
    }
    if (same) {
      if (r > 0) {
        recent.splice(r, 1);
        recent.unshift(cand);
      }
      return cand;
    }
  }
  const built = buildResponses(n, key);
  recent.unshift(built);
  if (recent.length > RECENT_MAX) recent.pop();
  return built;
}

function portVolts(n: NetworkInput, lr: LinearResponses, ifs: number, ib: number): number {
  const we = lr.perEmf;
  const wb = lr.perBridgeA;
  return n.batteryEmfV * (we[BPL]! - we[AC]!) + (ib - ifs) * (wb[BPL]! - wb[AC]!);
}

// Reused for every bridge solve (bridgeOperatingPoint keeps nothing of it).
const bridgeInput: BridgePointInput = {
  table: null as unknown as BridgeTable,
  emfPeakV: 0,
  reactanceOhm: 0,
  phaseResistanceOhm: 0,
  diode: { saturationCurrentA: 1e-7, emissionCoefficient: 1.6 },
  dcTheveninV: 0,
  dcResistanceOhm: 0,
  guessA: 0,
};

/** The bridge's operating point against the network's Thevenin source, into `point`. */
function solveBridge(n: NetworkInput, lr: LinearResponses, ifs: number): void {
  const we = lr.perEmf;
  const wb = lr.perBridgeA;
  const b = bridgeInput;
  b.table = n.table;
  b.emfPeakV = n.emfPeakV;
  b.reactanceOhm = n.reactanceOhm;
  b.phaseResistanceOhm = n.phaseResistanceOhm;
  b.diode = n.diode;
  b.dcTheveninV = n.batteryEmfV * (we[BPL]! - we[AC]!) - ifs * (wb[BPL]! - wb[AC]!);
  b.dcResistanceOhm = wb[BPL]! - wb[AC]!;
  b.guessA = n.guessA;
  bridgeOperatingPoint(b, point);
}

/** Zero ripple transfer, for a solution not yet written. */
const NO_RIPPLE: NodeVoltages = Object.freeze({ batteryPos: 0, junction: 0, bplus: 0, altCase: 0, engine: 0, chassis: 0, batteryNeg: 0 });

/** A solution for solveNetworkInto to fill: fresh objects, keys in the order JSON shows them. */
export function blankSolution(): NetworkSolution {
  return {
    nodeV: { batteryPos: 0, junction: 0, bplus: 0, altCase: 0, engine: 0, chassis: 0, batteryNeg: 0 },
    branchA: { battery: 0, pile: 0, posCable: 0, bplusCable: 0, alternator: 0, mount: 0, strap: 0, negCable: 0, loads: 0, starter: 0 },
    rippleOhm: NO_RIPPLE,
    bridgeCurrentA: 0,
    fieldSupplyA: 0,
    rippleCurrentRmsA: 0,
    rippleHarmonic: 6,
  };
}

/**
 * Nodal analysis of the car's network. By superposition the node voltages
 * are v = E_b w_emf + (I_bridge - I_field) w_bridge; the
 * bridge sees the Thevenin source that gives, its nonlinear output is solved
 * against it, and every branch current follows from the node voltages.
 * Deterministic: the cached responses are exactly what a fresh solve gives.
 *
 * The solution is written into `out` (its nodeV and branchA objects are
 * overwritten; a fresh one comes from blankSolution): the step keeps only the
 * last of many solutions. `out` is written only after everything has been
 * read from `n`.
 */
export function solveNetworkInto(n: NetworkInput, out: NetworkSolution): NetworkSolution {
  const lr = responsesFor(n);
  const we = lr.perEmf;
  const wb = lr.perBridgeA;
  const e = n.batteryEmfV;
  let ifs = n.fieldSupplyA;
  solveBridge(n, lr, ifs);
  // The field is fed from B+; with B+ isolated and the bridge unable to feed
  // it, B+ would be dragged below the case, which the bridge's own diodes
  // forbid: the field then freewheels and draws nothing from B+.
  if (ifs > 0 && portVolts(n, lr, ifs, point.meanA) < 0) {
    ifs = 0;
    solveBridge(n, lr, ifs);
  }
  const ib = point.meanA;
  const src = ib - ifs;
  const vBp = e * we[BP]! + src * wb[BP]!;
  const vJn = e * we[JN]! + src * wb[JN]!;
  const vBpl = e * we[BPL]! + src * wb[BPL]!;
  const vAc = e * we[AC]! + src * wb[AC]!;
  const vEn = e * we[EN]! + src * wb[EN]!;
  const vCh = e * we[CH]! + src * wb[CH]!;
  const gb = 1 / n.batteryR;
  const v = out.nodeV;
  v.batteryPos = vBp;
  v.junction = vJn;
  v.bplus = vBpl;
  v.altCase = vAc;
  v.engine = vEn;
  v.chassis = vCh;
  v.batteryNeg = 0;
  const a = out.branchA;
  a.battery = (e - vBp) * gb;
  a.pile = n.pileG * vBp;
  a.posCable = n.posG * (vBp - vJn);
  a.bplusCable = n.bplusG * (vBpl - vJn);
  a.alternator = ib - ifs - n.internalG * (vBpl - vAc);
  a.mount = n.mountG * (vEn - vAc);
  a.strap = n.strapG * (vCh - vEn);
  a.negCable = n.negG * vCh;
  a.loads = n.loadG * (vJn - vCh);
  a.starter = n.starterG * (vJn - vEn);
  out.rippleOhm = lr.rippleOhm;
  out.bridgeCurrentA = ib;
  out.fieldSupplyA = ifs;
  out.rippleCurrentRmsA = point.acRmsA;
  out.rippleHarmonic = point.dominantHarmonic;
  return out;
}
