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
