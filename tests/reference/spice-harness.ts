/**
 * Independent circuit reference: the rectifier circuit of sim/circuit.ts as an
 * ngspice netlist, solved by transient analysis in eecircuit-engine (ngspice
 * compiled to WebAssembly) and reduced to the same RectifierSolution the model
 * reports.
 *
 * The engine allows one Simulation per process and one run at a time, so every
 * run goes through a single promise queue.
 */
import { Simulation } from 'eecircuit-engine';
import type { ResultType } from 'eecircuit-engine';
import type { RectifierCircuit, RectifierSolution } from '../../sim/circuit';

export interface SpiceOptions {
  /**
   * Electrical cycles simulated before measuring. Default: enough for the
   * stator L/R transient to decay (8 time constants, at least 12 cycles).
   */
  settleCycles?: number;
  /** Whole electrical cycles the means and the spectrum are taken over. */
  measureCycles?: number;
  /** Maximum time step is one cycle divided by this. */
  stepsPerCycle?: number;
  /**
   * A shorted diode becomes a resistor of this value. Default: the diode's
   * own bulk resistance (a failed junction leaves the bulk path), or 1 mOhm
   * when the model has none.
   */
  shortedDiodeResistanceOhm?: number;
  /** Highest harmonic of the electrical frequency searched for the dominant ripple. */
  maxHarmonic?: number;
}

export interface ResolvedSpiceOptions {
  settleCycles: number;
  measureCycles: number;
  stepsPerCycle: number;
  shortedDiodeResistanceOhm: number;
  maxHarmonic: number;
}

export interface SpiceRun {
  solution: RectifierSolution;
  /** Raw engine time points covering the measured cycles (inclusive ends interpolated). */
  timeS: number[];
  batteryPostV: number[];
  outputCurrentA: number[];
  /** Magnitude (peak) of harmonic k of the battery-post voltage at index k; index 0 is unused. */
  harmonicPeakV: number[];
  /** Mean output current of each measured cycle, first to last. */
  cycleMeanCurrentA: number[];
  /** Engine warnings that did not stop the run. */
  warnings: string[];
  /** Options of the run that succeeded (the step may be finer than asked after a retry). */
  options: ResolvedSpiceOptions;
  solverOptions: string;
  /** Wall time of the engine run alone. */
  engineTimeMs: number;
}

const DEFAULT_MEASURE_CYCLES = 4;
const DEFAULT_STEPS_PER_CYCLE = 300;
const DEFAULT_SHORTED_DIODE_OHM = 1e-3;
const DEFAULT_MAX_HARMONIC = 36;
const MIN_SETTLE_CYCLES = 12;
const MAX_SETTLE_CYCLES = 400;
const SETTLE_TIME_CONSTANTS = 8;
const NO_RIPPLE_PEAK_V = 1e-6;
// Keeps the star point, which only the windings and diodes reach, from
// floating in the DC operating point; at 1 GOhm it draws nanoamps.
const BLEED_RESISTANCE_OHM = 1e9;

// The default reltol (1e-3) leaves the mean output about 0.4 % off the
// converged value for a diode bridge; 1e-4 brings it within about 0.05 %.
// The default junction gmin (1e-12 S) lets lightly loaded bridges crawl
// through tiny time steps; 1e-8 S leaks 0.14 uA per diode at 14 V and keeps
// the step near the maximum. Sharp diodes with little inductance sometimes
// still stop with "timestep too small"; the gear method, then a finer step,
// get past that without moving the result measurably.
const SOLVER_ATTEMPTS = [
  { solverOptions: 'reltol=1e-4 gmin=1e-8', stepScale: 1 },
  { solverOptions: 'reltol=1e-4 gmin=1e-8 method=gear', stepScale: 1 },
  { solverOptions: 'reltol=1e-4 gmin=1e-9', stepScale: 1.5 },
  { solverOptions: 'reltol=1e-4', stepScale: 2 },
] as const;

const PHASES = ['a', 'b', 'c'] as const;
// Positive sequence: B lags A by 120 degrees, C lags by 240.
const PHASE_SHIFT_DEG = [0, -120, -240] as const;

export function resolveOptions(circuit: RectifierCircuit, opts: SpiceOptions = {}): ResolvedSpiceOptions {
  const stepsPerCycle = opts.stepsPerCycle ?? DEFAULT_STEPS_PER_CYCLE;
  const measureCycles = opts.measureCycles ?? DEFAULT_MEASURE_CYCLES;
  const settleCycles = opts.settleCycles ?? defaultSettleCycles(circuit);
  const maxHarmonic = Math.min(opts.maxHarmonic ?? DEFAULT_MAX_HARMONIC, Math.floor(stepsPerCycle / 8));
  const resolved: ResolvedSpiceOptions = {
    settleCycles,
    measureCycles,
    stepsPerCycle,
    shortedDiodeResistanceOhm:
      opts.shortedDiodeResistanceOhm ??
      (circuit.diode.seriesResistanceOhm > 0 ? circuit.diode.seriesResistanceOhm : DEFAULT_SHORTED_DIODE_OHM),
    maxHarmonic,
  };
  if (!Number.isInteger(settleCycles) || settleCycles < 0) throw new Error(`settleCycles must be a whole number >= 0, got ${settleCycles}`);
  if (!Number.isInteger(measureCycles) || measureCycles < 1) throw new Error(`measureCycles must be a whole number >= 1, got ${measureCycles}`);
  if (!Number.isInteger(stepsPerCycle) || stepsPerCycle < 16) throw new Error(`stepsPerCycle must be a whole number >= 16, got ${stepsPerCycle}`);
  if (maxHarmonic < 1) throw new Error('stepsPerCycle too small to resolve any harmonic');
  return resolved;
}

function defaultSettleCycles(circuit: RectifierCircuit): number {
  const lH = circuit.synchronousInductanceH;
  const rOhm = circuit.statorResistanceOhm;
  if (lH <= 0) return MIN_SETTLE_CYCLES;
  // With R -> 0 the diodes and the battery still damp the loop; the cap keeps the run bounded.
  const tauS = rOhm > 0 ? lH / rOhm : Infinity;
  const cycles = Math.ceil(SETTLE_TIME_CONSTANTS * tauS * circuit.electricalHz);
  return Math.min(MAX_SETTLE_CYCLES, Math.max(MIN_SETTLE_CYCLES, cycles));
}

function num(value: number, what: string): string {
  if (!Number.isFinite(value)) throw new Error(`${what} must be finite, got ${value}`);
  return value.toPrecision(12);
}

/** A resistance between two nodes; zero becomes a 0 V source so the engine sees an exact short. */
function seriesResistance(name: string, nodeA: string, nodeB: string, resistanceOhm: number, what: string): string {
  if (resistanceOhm < 0) throw new Error(`${what} must be >= 0, got ${resistanceOhm}`);
  if (resistanceOhm === 0) return `v${name} ${nodeA} ${nodeB} 0`;
  return `r${name} ${nodeA} ${nodeB} ${num(resistanceOhm, what)}`;
}

function validateCircuit(circuit: RectifierCircuit): void {
  if (!(circuit.electricalHz > 0)) throw new Error(`electricalHz must be > 0, got ${circuit.electricalHz}`);
  if (!(circuit.phaseEmfPeakV >= 0)) throw new Error(`phaseEmfPeakV must be >= 0, got ${circuit.phaseEmfPeakV}`);
  if (!(circuit.synchronousInductanceH >= 0)) throw new Error(`synchronousInductanceH must be >= 0`);
  if (!(circuit.diode.saturationCurrentA > 0)) throw new Error('diode saturationCurrentA must be > 0');
  if (!(circuit.diode.emissionCoefficient > 0)) throw new Error('diode emissionCoefficient must be > 0');
  if (!(circuit.diode.seriesResistanceOhm >= 0)) throw new Error('diode seriesResistanceOhm must be >= 0');
  if (!(circuit.loadResistanceOhm > 0)) throw new Error(`loadResistanceOhm must be > 0 (Infinity for none), got ${circuit.loadResistanceOhm}`);
  for (const i of [...circuit.openDiodes, ...circuit.shortedDiodes]) {
    if (!Number.isInteger(i) || i < 0 || i > 5) throw new Error(`diode index out of range 0..5: ${i}`);
  }
  for (const i of circuit.openPhases) {
    if (!Number.isInteger(i) || i < 0 || i > 2) throw new Error(`phase index out of range 0..2: ${i}`);
  }
}

interface TransientWindow {
  tStopS: number;
  tStartS: number;
  maxStepS: number;
  measureStartS: number;
  measureEndS: number;
}

function transientWindow(circuit: RectifierCircuit, o: ResolvedSpiceOptions): TransientWindow {
  const periodS = 1 / circuit.electricalHz;
  const maxStepS = periodS / o.stepsPerCycle;
  const measureStartS = o.settleCycles * periodS;
  const measureEndS = (o.settleCycles + o.measureCycles) * periodS;
  // Start saving a little early so a raw point sits at or before the window start.
  const tStartS = Math.max(0, measureStartS - 2 * maxStepS);
  return { tStopS: measureEndS + maxStepS, tStartS, maxStepS, measureStartS, measureEndS };
}

/**
 * Node names: `st` star point; `e_x`, `l_x` inside phase x; `p_x` phase
 * terminal at the bridge; `bp` B+ stud; `bo` after the current sense; `batp`
 * battery positive post; `cs` alternator case; `0` battery negative post.
 */
export function netlistFor(
  circuit: RectifierCircuit,
  opts: SpiceOptions = {},
  title = 'loadline rectifier reference',
  solverOptions: string = SOLVER_ATTEMPTS[0].solverOptions,
): string {
  validateCircuit(circuit);
  const o = resolveOptions(circuit, opts);
  const w = transientWindow(circuit, o);
  const open = new Set(circuit.openDiodes);
  const shorted = new Set(circuit.shortedDiodes.filter((i) => !open.has(i)));
  // With two phases open the star point has no return path, so the third
  // winding carries no current either: treat it as open too.
  const openPhases = new Set(circuit.openPhases.length >= 2 ? [0, 1, 2] : circuit.openPhases);
  const lines: string[] = [title];

  PHASES.forEach((x, i) => {
    if (openPhases.has(i)) return;
    const shiftDeg = PHASE_SHIFT_DEG[i] ?? 0;
    lines.push(`vemf_${x} e_${x} st SIN(0 ${num(circuit.phaseEmfPeakV, 'phaseEmfPeakV')} ${num(circuit.electricalHz, 'electricalHz')} 0 0 ${shiftDeg})`);
    if (circuit.synchronousInductanceH > 0) {
      lines.push(seriesResistance(`s_${x}`, `e_${x}`, `l_${x}`, circuit.statorResistanceOhm, 'statorResistanceOhm'));
      lines.push(`ls_${x} l_${x} p_${x} ${num(circuit.synchronousInductanceH, 'synchronousInductanceH')}`);
    } else {
      lines.push(seriesResistance(`s_${x}`, `e_${x}`, `p_${x}`, circuit.statorResistanceOhm, 'statorResistanceOhm'));
    }
  });
  if (openPhases.size < 3) lines.push(`rbleed_st st cs ${BLEED_RESISTANCE_OHM}`);

  for (let d = 0; d < 6; d++) {
    const phase = d % 3;
    const x = PHASES[phase] ?? 'a';
    const [anode, cathode] = d < 3 ? [`p_${x}`, 'bp'] : ['cs', `p_${x}`];
    if (open.has(d)) continue;
    if (shorted.has(d)) {
      lines.push(`rshort${d} ${anode} ${cathode} ${num(o.shortedDiodeResistanceOhm, 'shortedDiodeResistanceOhm')}`);
      continue;
    }
    // The two diodes of an open phase pass only leakage (nanoamps) unless the
    // other one is shorted; left in, their junction node floats between two
    // reverse junctions and the engine crawls through tiny time steps.
    const partner = d < 3 ? d + 3 : d - 3;
    if (openPhases.has(phase) && !shorted.has(partner)) continue;
    lines.push(`d${d} ${anode} ${cathode} drect`);
  }
  const dm = circuit.diode;
  lines.push(
    `.model drect D(IS=${num(dm.saturationCurrentA, 'saturationCurrentA')} N=${num(dm.emissionCoefficient, 'emissionCoefficient')} RS=${num(dm.seriesResistanceOhm, 'seriesResistanceOhm')})`,
  );

  lines.push('vsense bp bo 0');
  lines.push(seriesResistance('bplus', 'bo', 'batp', circuit.bplusResistanceOhm, 'bplusResistanceOhm'));
  lines.push(seriesResistance('ground', 'cs', '0', circuit.groundResistanceOhm, 'groundResistanceOhm'));
  if (circuit.battery !== null) {
    lines.push(seriesResistance('batint', 'batp', 'bati', circuit.battery.internalResistanceOhm, 'internalResistanceOhm'));
    lines.push(`vbat bati 0 ${num(circuit.battery.ocvV, 'ocvV')}`);
  }
  if (Number.isFinite(circuit.loadResistanceOhm)) {
    lines.push(`rload batp 0 ${num(circuit.loadResistanceOhm, 'loadResistanceOhm')}`);
  }

  lines.push(`.options ${solverOptions}`);
  lines.push('.save v(batp) v(bp) v(cs) i(vsense)');
  lines.push(`.tran ${num(w.maxStepS, 'step')} ${num(w.tStopS, 'tstop')} ${num(w.tStartS, 'tstart')} ${num(w.maxStepS, 'tmax')}`);
  lines.push('.end');
  return lines.join('\n') + '\n';
}

let simulationPromise: Promise<Simulation> | null = null;
let queue: Promise<unknown> = Promise.resolve();
let runCounter = 0;

// After a failed analysis the engine reads back the previous run's raw file;
// with no previous file its promise never settles. One known-good run at start
// guarantees there is always a file, and the title check rejects stale data.
const PRIMING_NETLIST = 'loadline engine priming\nv1 1 0 1\nr1 1 0 1\n.save v(1)\n.tran 1m 2m 0 1m\n.end\n';

async function startEngine(): Promise<Simulation> {
  const sim = new Simulation();
  await quietly(() => sim.start());
  sim.setNetList(PRIMING_NETLIST);
  const result = await quietly(() => sim.runSim());
  const errors = sim.getError().filter((m) => FATAL_MESSAGE.test(m));
  if (errors.length > 0 || !result.header.includes('Title: loadline engine priming')) {
    throw new Error(`ngspice engine did not start cleanly: ${errors.join('; ')}`);
  }
  return sim;
}

// The engine echoes every ngspice message to console.error as well as
// collecting it for getError(); the harness reports them itself, through
// thrown errors and SpiceRun.warnings.
async function quietly<T>(job: () => Promise<T>): Promise<T> {
  const original = console.error;
  console.error = () => undefined;
  try {
    return await job();
  } finally {
    console.error = original;
  }
}

function engine(): Promise<Simulation> {
  simulationPromise ??= startEngine();
  return simulationPromise;
}

function enqueue<T>(job: () => Promise<T>): Promise<T> {
  const next = queue.then(job, job);
  queue = next.catch(() => undefined);
  return next;
}

const FATAL_MESSAGE = /error|too small|abort|interrupt|singular|no convergence|fail/i;
const RETRYABLE_MESSAGE = /too small|singular|no convergence|gmin|source stepping/i;

export class SpiceRunError extends Error {
  constructor(
    readonly messages: readonly string[],
    readonly netlist: string,
    readonly retryable: boolean,
  ) {
    super(`ngspice failed:\n${messages.join('\n')}\n--- netlist ---\n${netlist}`);
    this.name = 'SpiceRunError';
  }
}

interface RawTrace {
  timeS: number[];
  byName: Map<string, number[]>;
  warnings: string[];
  engineTimeMs: number;
}

async function runNetlist(netlist: string, title: string, tStopS: number, maxStepS: number): Promise<RawTrace> {
  return enqueue(async () => {
    const sim = await engine();
    sim.setNetList(netlist);
    const t0 = performance.now();
    const result: ResultType = await quietly(() => sim.runSim());
    const engineTimeMs = performance.now() - t0;
    const messages = sim.getError().map((m) => m.trim()).filter((m) => m.length > 0);
    if (messages.some((m) => FATAL_MESSAGE.test(m))) {
      throw new SpiceRunError(messages, netlist, messages.some((m) => RETRYABLE_MESSAGE.test(m)));
    }
    const warnings = messages;
    // A failed run can hand back the previous run's data, so check it is ours.
    if (!result.header.includes(`Title: ${title}`)) throw new Error(`ngspice returned results of another run (wanted "${title}")`);
    if (result.dataType !== 'real') throw new Error('ngspice returned complex data for a transient run');
    const byName = new Map<string, number[]>();
    for (const d of result.data) byName.set(d.name.toLowerCase(), d.values);
    const timeS = byName.get('time');
    if (timeS === undefined || timeS.length < 2) throw new Error('ngspice returned no time points');
    const lastS = timeS[timeS.length - 1] ?? 0;
    if (Math.abs(lastS - tStopS) > maxStepS) throw new Error(`transient stopped at ${lastS} s, expected ${tStopS} s`);
    return { timeS, byName, warnings, engineTimeMs };
  });
}

function series(trace: RawTrace, name: string): number[] {
  const values = trace.byName.get(name);
  if (values === undefined) throw new Error(`ngspice result lacks ${name}; has ${[...trace.byName.keys()].join(', ')}`);
  return values;
}

function interpolate(timeS: readonly number[], values: readonly number[], atS: number): number {
  let hi = timeS.findIndex((t) => t >= atS);
  if (hi < 0) hi = timeS.length - 1;
  if (hi === 0) return values[0] ?? 0;
  const tA = timeS[hi - 1] ?? 0;
  const tB = timeS[hi] ?? 0;
  const vA = values[hi - 1] ?? 0;
  const vB = values[hi] ?? 0;
  if (tB === tA) return vB;
  return vA + ((vB - vA) * (atS - tA)) / (tB - tA);
}

/** Raw points strictly inside (t0, t1) plus interpolated values at both ends. */
function clip(timeS: readonly number[], columns: readonly (readonly number[])[], t0: number, t1: number): { t: number[]; cols: number[][] } {
  const t: number[] = [t0];
  const cols = columns.map((c) => [interpolate(timeS, c, t0)]);
  for (let i = 0; i < timeS.length; i++) {
    const ti = timeS[i] ?? 0;
    if (ti <= t0 || ti >= t1) continue;
    t.push(ti);
    columns.forEach((c, j) => cols[j]?.push(c[i] ?? 0));
  }
  t.push(t1);
  columns.forEach((c, j) => cols[j]?.push(interpolate(timeS, c, t1)));
  return { t, cols };
}

function trapezoidMean(t: readonly number[], y: readonly number[], weight?: (ti: number) => number): number {
  let area = 0;
  for (let i = 1; i < t.length; i++) {
    const ta = t[i - 1] ?? 0;
    const tb = t[i] ?? 0;
    const ya = (y[i - 1] ?? 0) * (weight ? weight(ta) : 1);
    const yb = (y[i] ?? 0) * (weight ? weight(tb) : 1);
    area += 0.5 * (ya + yb) * (tb - ta);
  }
  const span = (t[t.length - 1] ?? 0) - (t[0] ?? 0);
  return area / span;
}

/**
 * Full reference run: transient to periodic steady state, then means, ripple
 * RMS and the harmonic spectrum over whole electrical cycles.
 */
export async function spiceRun(circuit: RectifierCircuit, opts: SpiceOptions = {}): Promise<SpiceRun> {
  const requested = resolveOptions(circuit, opts);
  let options = requested;
  let trace: RawTrace | null = null;
  let lastError: unknown = null;
  let solverOptions: string = SOLVER_ATTEMPTS[0].solverOptions;
  for (const attempt of SOLVER_ATTEMPTS) {
    options = { ...requested, stepsPerCycle: Math.round(requested.stepsPerCycle * attempt.stepScale) };
    solverOptions = attempt.solverOptions;
    runCounter += 1;
    const title = `loadline rectifier reference ${runCounter}`;
    const w = transientWindow(circuit, options);
    try {
      trace = await runNetlist(netlistFor(circuit, options, title, solverOptions), title, w.tStopS, w.maxStepS);
      break;
    } catch (error) {
      lastError = error;
      if (!(error instanceof SpiceRunError) || !error.retryable) throw error;
    }
  }
  if (trace === null) throw lastError;
  const w = transientWindow(circuit, options);

  const { t, cols } = clip(
    trace.timeS,
    [series(trace, 'v(batp)'), series(trace, 'v(bp)'), series(trace, 'v(cs)'), series(trace, 'i(vsense)')],
    w.measureStartS,
    w.measureEndS,
  );
  const [batteryPostV = [], bplusV = [], caseV = [], outputCurrentA = []] = cols;
  const bplusVsCaseV = bplusV.map((v, i) => v - (caseV[i] ?? 0));

  const meanBatteryV = trapezoidMean(t, batteryPostV);
  const ac = batteryPostV.map((v) => v - meanBatteryV);
  const rippleRmsV = Math.sqrt(trapezoidMean(t, ac.map((v) => v * v)));

  const omega = 2 * Math.PI * circuit.electricalHz;
  const harmonicPeakV: number[] = [0];
  let dominantK = 0;
  let dominantPeakV = -1;
  for (let k = 1; k <= options.maxHarmonic; k++) {
    const re = 2 * trapezoidMean(t, ac, (ti) => Math.cos(k * omega * (ti - w.measureStartS)));
    const im = 2 * trapezoidMean(t, ac, (ti) => Math.sin(k * omega * (ti - w.measureStartS)));
    const peakV = Math.hypot(re, im);
    harmonicPeakV.push(peakV);
    if (peakV > dominantPeakV) {
      dominantPeakV = peakV;
      dominantK = k;
    }
  }

  // Mean output current of each measured cycle: equal when the run has reached periodic steady state.
  const periodS = 1 / circuit.electricalHz;
  const cycleMeanCurrentA: number[] = [];
  for (let c = 0; c < options.measureCycles; c++) {
    const c0 = w.measureStartS + c * periodS;
    const part = clip(t, [outputCurrentA], c0, c0 + periodS);
    cycleMeanCurrentA.push(trapezoidMean(part.t, part.cols[0] ?? []));
  }

  const solution: RectifierSolution = {
    meanOutputCurrentA: trapezoidMean(t, outputCurrentA),
    meanBplusV: trapezoidMean(t, bplusVsCaseV),
    meanBatteryV,
    rippleRmsV,
    // With no ripple above the engine's numerical noise there is no dominant component.
    dominantRippleHz: dominantPeakV > NO_RIPPLE_PEAK_V ? dominantK * circuit.electricalHz : 0,
  };
  return {
    solution,
    timeS: t,
    batteryPostV,
    outputCurrentA,
    harmonicPeakV,
    cycleMeanCurrentA,
    warnings: trace.warnings,
    options,
    solverOptions,
    engineTimeMs: trace.engineTimeMs,
  };
}

/** The reference solution of one circuit in periodic steady state. */
export async function spiceSolve(circuit: RectifierCircuit, opts: SpiceOptions = {}): Promise<RectifierSolution> {
  return (await spiceRun(circuit, opts)).solution;
}

const WARM_UP_CIRCUIT: RectifierCircuit = {
  electricalHz: 560,
  phaseEmfPeakV: 30,
  statorResistanceOhm: 0.02,
  synchronousInductanceH: 90e-6,
  diode: { saturationCurrentA: 1e-7, emissionCoefficient: 1.6, seriesResistanceOhm: 0.0015 },
  openDiodes: [],
  shortedDiodes: [],
  openPhases: [],
  battery: { ocvV: 12.5, internalResistanceOhm: 0.004 },
  bplusResistanceOhm: 0.002,
  groundResistanceOhm: 0.002,
  loadResistanceOhm: 0.2,
};

/**
 * Starts the engine and runs a few full-size bridge transients, so that a
 * timed run afterwards measures the solve alone: the engine's WebAssembly code
 * warms up over its first runs (in one measurement the first three solves took
 * about 13, 7 and 3 times the CPU of the fourth).
 */
export async function warmUpSpice(transients = 3): Promise<void> {
  await enqueue(async () => {
    await engine();
  });
  for (let i = 0; i < transients; i++) await spiceRun(WARM_UP_CIRCUIT);
}
