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
 *   fieldFeed positive junction -> alternator case (the field fed through the
 *             ignition switch and the charge-lamp circuit, when that feed is
 *             higher than the alternator's own B+)
 */

import type { BridgeTable, DiodeShockley } from './bridge.ts';
import { bridgeOperatingPoint } from './bridge.ts';
import { NETWORK_COLUMNS, NETWORK_CONDUCTANCES, NETWORK_NODES, workspace } from './workspace.ts';

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
  | 'starter'
  | 'fieldFeed';

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
  fieldFeed: { from: 'junction', to: 'altCase' },
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
  /**
   * RMS of the AC part of the rectifier's output current that reaches the
   * network: with a stiff DC side (a battery) all of it; with the B+ stud cut
   * off from the battery, the stud's AC voltage is the bridge's own
   * open-circuit ripple, which the bridge's output impedance sets (see
   * solveNetworkInto).
   */
  rippleCurrentRmsA: number;
  /** Largest AC component of the output, as a multiple of the electrical frequency (6 healthy). */
  rippleHarmonic: number;
  /** The share of the bridge's AC current that reaches the network (1 with a battery on B+; see rippleCurrentRmsA). */
  rippleShare01: number;
  /** Current through the B+ load-dump clamp (0 unless the stud would rise above BPLUS_CLAMP_V). */
  clampA: number;
  /** Sum over the three stator phases of the rms current squared (A^2): the stator's copper loss over its resistance. */
  statorSquaresA2: number;
  /** The standing DC part of the stator's phase currents as a space vector (A; 0 for a healthy bridge). */
  statorDcA: number;
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
  /** Field current drawn through the ignition and charge-lamp feed (junction to case). */
  ignitionFieldA: number;
  /** AC rms of the bridge's open-circuit output voltage per volt of phase EMF peak (its ripple with no load). */
  openRippleRatio: number;
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
export interface LinearResponses {
  key: Float64Array;
  perEmf: Float64Array;
  perBridgeA: Float64Array;
  /** Per ampere of field current fed from the junction to the case. */
  perFeedA: Float64Array;
  rippleOhm: NodeVoltages;
}

const COLS = 3;
if (N !== NETWORK_NODES || COLS !== NETWORK_COLUMNS || CONDUCTANCES !== NETWORK_CONDUCTANCES) throw new Error('the workspace sizes the network differently');
const { mat, rhs, point, keyScratch, bridgeInput } = workspace.network;
/**
 * The responses of the last few sets of conductances, most recently used
 * first. A pile stepped through a handful of settings comes back to each of
 * them, so this keeps more than the two or three a single change needs.
 */
const recent = workspace.cache.recentResponses;
const RECENT_MAX = 8;

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
  // Three right-hand sides side by side: unit battery EMF, unit bridge current, unit ignition-fed field current.
  rhs[BP * COLS] = gb;
  rhs[BPL * COLS + 1] = 1;
  rhs[AC * COLS + 1] = -1;
  rhs[JN * COLS + 2] = -1;
  rhs[AC * COLS + 2] = 1;
  // Gaussian elimination; the conductance matrix is symmetric positive definite.
  for (let k = 0; k < N; k++) {
    const pivot = mat[k * N + k]!;
    for (let i = k + 1; i < N; i++) {
      const f = mat[i * N + k]! / pivot;
      if (f === 0) continue;
      for (let j = k; j < N; j++) mat[i * N + j] = mat[i * N + j]! - f * mat[k * N + j]!;
      for (let c = 0; c < COLS; c++) rhs[i * COLS + c] = rhs[i * COLS + c]! - f * rhs[k * COLS + c]!;
    }
  }
  for (let k = N - 1; k >= 0; k--) {
    const d = mat[k * N + k]!;
    for (let c = 0; c < COLS; c++) {
      let sum = rhs[k * COLS + c]!;
      for (let j = k + 1; j < N; j++) sum -= mat[k * N + j]! * rhs[j * COLS + c]!;
      rhs[k * COLS + c] = sum / d;
    }
  }
  const perEmf = new Float64Array(N);
  const perBridgeA = new Float64Array(N);
  const perFeedA = new Float64Array(N);
  for (let k = 0; k < N; k++) {
    perEmf[k] = rhs[k * COLS]!;
    perBridgeA[k] = rhs[k * COLS + 1]!;
    perFeedA[k] = rhs[k * COLS + 2]!;
  }
  return {
    key: new Float64Array(key),
    perEmf,
    perBridgeA,
    perFeedA,
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
  const wf = lr.perFeedA;
  return n.batteryEmfV * (we[BPL]! - we[AC]!) + (ib - ifs) * (wb[BPL]! - wb[AC]!) + n.ignitionFieldA * (wf[BPL]! - wf[AC]!);
}

// bridgeInput (workspace.network) is reused for every bridge solve: bridgeOperatingPoint keeps nothing of it.

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
  const wf = lr.perFeedA;
  b.dcTheveninV = n.batteryEmfV * (we[BPL]! - we[AC]!) - ifs * (wb[BPL]! - wb[AC]!) + n.ignitionFieldA * (wf[BPL]! - wf[AC]!);
  b.dcResistanceOhm = wb[BPL]! - wb[AC]!;
  b.guessA = n.guessA;
  bridgeOperatingPoint(b, point);
}

/**
 * Load-dump protection: the rectifier's diodes are avalanche (Zener) types
 * that conduct from B+ to the case above this voltage, as main-current Zener
 * diodes do in alternators built for it ("Load dump", after Borgeest,
 * Elektronik in der Fahrzeugtechnik; the voltage is from memory: ISO 16750-2
 * caps a suppressed load dump at 35 V for 12 V systems). With B+ cut off from
 * the battery and the field stuck full on, nothing else would bound the stud.
 */
export const BPLUS_CLAMP_V = 30;
/** Dynamic resistance of the clamp while it conducts (for the ripple it lets through). */
const CLAMP_DYNAMIC_OHM = 0.05;

/** The bridge's operating point with its port held at `portV` (the clamp conducting), into `point`. */
function solveBridgeHeld(n: NetworkInput, portV: number): void {
  const b = bridgeInput;
  b.table = n.table;
  b.emfPeakV = n.emfPeakV;
  b.reactanceOhm = n.reactanceOhm;
  b.phaseResistanceOhm = n.phaseResistanceOhm;
  b.diode = n.diode;
  b.dcTheveninV = portV;
  b.dcResistanceOhm = 0;
  b.guessA = n.guessA;
  bridgeOperatingPoint(b, point);
}

/** Zero ripple transfer, for a solution not yet written. */
const NO_RIPPLE: NodeVoltages = Object.freeze({ batteryPos: 0, junction: 0, bplus: 0, altCase: 0, engine: 0, chassis: 0, batteryNeg: 0 });

/** A solution for solveNetworkInto to fill: fresh objects, keys in the order JSON shows them. */
export function blankSolution(): NetworkSolution {
  return {
    nodeV: { batteryPos: 0, junction: 0, bplus: 0, altCase: 0, engine: 0, chassis: 0, batteryNeg: 0 },
    branchA: { battery: 0, pile: 0, posCable: 0, bplusCable: 0, alternator: 0, mount: 0, strap: 0, negCable: 0, loads: 0, starter: 0, fieldFeed: 0 },
    rippleOhm: NO_RIPPLE,
    bridgeCurrentA: 0,
    fieldSupplyA: 0,
    rippleCurrentRmsA: 0,
    rippleHarmonic: 6,
    rippleShare01: 1,
    clampA: 0,
    statorSquaresA2: 0,
    statorDcA: 0,
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
  const wf = lr.perFeedA;
  const ig = n.ignitionFieldA;
  const zPort = wb[BPL]! - wb[AC]!;
  let ib = point.meanA;
  let src = ib - ifs;
  let clampA = 0;
  if (portVolts(n, lr, ifs, ib) > BPLUS_CLAMP_V) {
    // The clamp holds the port: the bridge gives what it can at the clamp's
    // voltage, the network takes the current that puts its port there, and
    // the clamp conducts the difference.
    solveBridgeHeld(n, BPLUS_CLAMP_V);
    ib = point.meanA;
    src = (BPLUS_CLAMP_V - e * (we[BPL]! - we[AC]!) - ig * (wf[BPL]! - wf[AC]!)) / zPort;
    clampA = ib - ifs - src;
    if (clampA < 0) {
      clampA = 0;
      src = ib - ifs;
    }
  }
  const vBp = e * we[BP]! + src * wb[BP]! + ig * wf[BP]!;
  const vJn = e * we[JN]! + src * wb[JN]! + ig * wf[JN]!;
  const vBpl = e * we[BPL]! + src * wb[BPL]! + ig * wf[BPL]!;
  const vAc = e * we[AC]! + src * wb[AC]! + ig * wf[AC]!;
  const vEn = e * we[EN]! + src * wb[EN]! + ig * wf[EN]!;
  const vCh = e * we[CH]! + src * wb[CH]! + ig * wf[CH]!;
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
  a.alternator = src - n.internalG * (vBpl - vAc);
  a.mount = n.mountG * (vEn - vAc);
  a.strap = n.strapG * (vCh - vEn);
  a.negCable = n.negG * vCh;
  a.loads = n.loadG * (vJn - vCh);
  a.starter = n.starterG * (vJn - vEn);
  a.fieldFeed = ig;
  out.rippleOhm = lr.rippleOhm;
  out.bridgeCurrentA = ib;
  out.fieldSupplyA = ifs;
  // The bridge's AC output as a Norton source: its AC current in parallel
  // with its own output impedance, which the open-circuit ripple fixes
  // (Z = open-circuit AC volts / AC current). A battery on the port takes
  // nearly all of the AC current; a port cut off from the battery shows the
  // open-circuit ripple and never more.
  const openAcV = n.openRippleRatio * n.emfPeakV;
  const acA = point.acRmsA;
  const share = acA > 0 && zPort > 0 && openAcV > 0 ? openAcV / (openAcV + acA * zPort) : 1;
  // A conducting clamp shunts the port with its small dynamic resistance.
  const clampShare = clampA > 0 ? CLAMP_DYNAMIC_OHM / (CLAMP_DYNAMIC_OHM + zPort) : 1;
  out.rippleShare01 = share * clampShare;
  out.rippleCurrentRmsA = acA * share * clampShare;
  out.clampA = clampA;
  out.rippleHarmonic = point.dominantHarmonic;
  out.statorSquaresA2 = point.phaseSquaresA2;
  out.statorDcA = point.statorDcA;
  return out;
}
