/**
 * The three-phase stator and six-diode bridge in periodic steady state.
 *
 * Two levels, one core:
 *  - `periodicBridge` integrates one electrical cycle of the star-connected
 *    stator (EMF behind R and L per phase) feeding the bridge into a DC side
 *    of Thevenin voltage and resistance, with diodes as a forward drop, and
 *    finds the periodic solution by shooting: Newton on the start-of-cycle
 *    phase currents, with the cycle's exact derivatives from a linearised
 *    pass along the diodes' recorded states. It holds through heavy
 *    commutation overlap, which is where the alternator's output self-limits.
 *  - `bridgeTable` runs that core once per bridge topology over a grid of
 *    dimensionless operating points and caches the result; the step looks up
 *    the mean output there and solves one scalar equation.
 *
 * With a stiff DC side (a battery) and one constant drop per diode the
 * circuit reduces exactly to two numbers: with currents in units of E/X and
 * voltages in units of E (E = phase EMF peak, X = omega L), the output
 * depends only on u = (V_dc + 2 V_f) / E and r = R_phase / X. Two smaller
 * effects are carried in the table as first-order terms, each computed
 * exactly by a linearised pass over the periodic solution of its grid point:
 *  - each diode's own drop (Shockley: n Vt ln(1 + i/Is)) instead of one drop
 *    for all: the term in b = n Vt / E;
 *  - a DC side that is not stiff (its resistance carries the AC part of the
 *    output too): the term in rho = R_dc / X, kept for the faulted bridges,
 *    whose output ripples hard; a healthy bridge's ripple is too small for
 *    it to matter (under 0.25 % at rho = 0.6).
 * The mean is stored as its square root, which falls straight to zero at the
 * conduction edge (the output there goes as the square of the distance to
 * it) and is carried past the edge as a straight line, so the edge itself
 * sits where the circuit puts it between grid points.
 *
 * Units in names: V, A, Ohm, H, rad/s; "n" prefixes dimensionless values.
 */

import { detCos, detLog, detLog1p, detSin } from './det-math.ts';
import { workspace } from './workspace.ts';

/** Which diodes and phases work. Diodes 0-2 positive (A-C), 3-5 negative (A-C). */
export interface BridgeTopology {
  openDiodes: readonly number[];
  shortedDiodes: readonly number[];
  openPhases: readonly number[];
}

export interface BridgeCycleInput {
  topology: BridgeTopology;
  /** Line-to-neutral EMF, peak. */
  emfPeakV: number;
  omegaRadS: number;
  inductanceH: number;
  /** Stator phase plus one diode's bulk resistance. */
  phaseResistanceOhm: number;
  /** Forward drop of a conducting diode (a shorted diode has none). */
  diodeDropV: number;
  /** DC side seen from the bridge (B+ to case): V = thevenin + R * i. */
  dcTheveninV: number;
  dcResistanceOhm: number;
  stepsPerCycle: number;
}

export interface BridgeCycleResult {
  /** Mean current out of the B+ stud. */
  meanA: number;
  /** RMS of the AC part of that current. */
  acRmsA: number;
  /** Harmonic (multiple of the electrical frequency) with the largest AC component. */
  dominantHarmonic: number;
  /** Output current through one cycle, stepsPerCycle samples. */
  waveformA: Float64Array;
  /** Start-of-cycle phase currents of the periodic solution (A, B). */
  startA: [number, number];
  /** RMS current of each stator phase (A, B, C). */
  phaseRmsA: [number, number, number];
  /** Mean (the standing DC part) of each phase current, positive toward the bridge. */
  phaseMeanA: [number, number, number];
}

const MAX_HARMONIC = 12;

interface Masks {
  topOk: boolean[];
  botOk: boolean[];
  forcedTop: boolean[];
  forcedBot: boolean[];
  phaseOpen: boolean[];
}

function masksOf(t: BridgeTopology): Masks {
  const has = (list: readonly number[], i: number) => list.includes(i);
  const m: Masks = { topOk: [], botOk: [], forcedTop: [], forcedBot: [], phaseOpen: [] };
  for (let k = 0; k < 3; k++) {
    const open = has(t.openPhases, k);
    const topOpen = has(t.openDiodes, k);
    const botOpen = has(t.openDiodes, k + 3);
    const topShort = !topOpen && has(t.shortedDiodes, k);
    const botShort = !botOpen && !topShort && has(t.shortedDiodes, k + 3);
    m.phaseOpen.push(open);
    m.forcedTop.push(!open && topShort);
    m.forcedBot.push(!open && botShort);
    m.topOk.push(!open && !topOpen && !botShort);
    m.botOk.push(!open && !botOpen && !topShort);
  }
  return m;
}

/**
 * What one integrated cycle leaves behind: the state of each phase after
 * every step (0 off, 1 to B+, 2 to the case), the phase currents and the
 * output current, so that a linearised pass can follow the same path.
 */
interface CycleRecord {
  n: number;
  /** Index 3 s + k. */
  modes: Uint8Array;
  /** Index 3 s + k. */
  phaseA: Float64Array;
  /** Index s. */
  outA: Float64Array;
  endA: number;
  endB: number;
}

function newRecord(n: number): CycleRecord {
  return { n, modes: new Uint8Array(3 * n), phaseA: new Float64Array(3 * n), outA: new Float64Array(n), endA: 0, endB: 0 };
}

/**
 * One cycle of backward-Euler integration from the given start currents,
 * written into `rec` (the end-of-cycle phase currents A and B in endA/endB).
 */
function integrateCycle(inp: BridgeCycleInput, m: Masks, startA: number, startB: number, rec: CycleRecord): void {
  const n = inp.stepsPerCycle;
  const h = (2 * Math.PI) / inp.omegaRadS / n;
  const lOverH = inp.inductanceH / h;
  const g = 1 / (lOverH + inp.phaseResistanceOhm);
  const vf = inp.diodeDropV;
  const vth = inp.dcTheveninV;
  const rth = inp.dcResistanceOhm;
  const i = [startA, startB, -(startA + startB)];
  for (let k = 0; k < 3; k++) if (m.phaseOpen[k]) i[k] = 0;
  // Modes: 0 off, 1 top (to B+), 2 bottom (to case).
  const mode = [0, 0, 0];
  for (let k = 0; k < 3; k++) {
    if (m.forcedTop[k]) mode[k] = 1;
    else if (m.forcedBot[k]) mode[k] = 2;
    else if (i[k]! > 1e-12 && m.topOk[k]) mode[k] = 1;
    else if (i[k]! < -1e-12 && m.botOk[k]) mode[k] = 2;
  }
  const e = [0, 0, 0];
  const a = [0, 0, 0];
  const next = [0, 0, 0];
  const sines = sineTable(n);
  const modes = rec.modes;
  const phaseA = rec.phaseA;
  const outA = rec.outA;
  for (let s = 1; s <= n; s++) {
    e[0] = inp.emfPeakV * sines[s]!;
    e[1] = inp.emfPeakV * sines[n + 1 + s]!;
    e[2] = inp.emfPeakV * sines[2 * n + 2 + s]!;
    let busV = vth;
    let sTop = 0;
    for (let iter = 0; iter < 12; iter++) {
      let nT = 0;
      let nB = 0;
      let aT = 0;
      let aB = 0;
      for (let k = 0; k < 3; k++) {
        if (mode[k] === 1) {
          const c = m.forcedTop[k] ? 0 : vf;
          a[k] = g * (lOverH * i[k]! + e[k]! - c);
          aT += a[k]!;
          nT++;
        } else if (mode[k] === 2) {
          const c = m.forcedBot[k] ? 0 : -vf;
          a[k] = g * (lOverH * i[k]! + e[k]! - c);
          aB += a[k]!;
          nB++;
        }
      }
      let vN = Number.NaN;
      // Current can flow once two terminals connect: across the rails, or round one rail (a shorted diode).
      if (nT + nB >= 2) {
        const d = 1 + nT * g * rth;
        vN = -((aT - nT * g * vth) / d + aB) / ((nT * g) / d + nB * g);
        sTop = (aT + nT * g * vN - nT * g * vth) / d;
        busV = vth + rth * sTop;
        for (let k = 0; k < 3; k++) {
          if (mode[k] === 1) next[k] = a[k]! + g * vN - g * busV;
          else if (mode[k] === 2) next[k] = a[k]! + g * vN;
          else next[k] = 0;
        }
      } else {
        sTop = 0;
        busV = vth;
        next[0] = next[1] = next[2] = 0;
      }
      // Check the modes against the solution.
      let changed = false;
      for (let k = 0; k < 3; k++) {
        if (m.forcedTop[k] || m.forcedBot[k]) continue;
        if (mode[k] === 1 && next[k]! < 0) {
          mode[k] = 0;
          changed = true;
        } else if (mode[k] === 2 && next[k]! > 0) {
          mode[k] = 0;
          changed = true;
        }
      }
      if (changed) continue;
      if (!Number.isNaN(vN)) {
        for (let k = 0; k < 3; k++) {
          if (mode[k] !== 0 || m.phaseOpen[k]) continue;
          const v = e[k]! + vN + lOverH * i[k]!;
          if (v > busV + vf && m.topOk[k]) {
            mode[k] = 1;
            changed = true;
          } else if (v < -vf && m.botOk[k]) {
            mode[k] = 2;
            changed = true;
          }
        }
      } else {
        // No current flows: does any top/bottom pair see enough voltage to start,
        // or, round one rail, a phase against a shorted diode's phase?
        let best = -Infinity;
        let kt = -1;
        let kb = -1;
        for (let k = 0; k < 3; k++) {
          const canTop = m.forcedTop[k] || (m.topOk[k] && mode[k] !== 2);
          if (!canTop) continue;
          const ct = m.forcedTop[k] ? 0 : vf;
          for (let j = 0; j < 3; j++) {
            if (j === k) continue;
            const canBot = m.forcedBot[j] || (m.botOk[j] && mode[j] !== 1);
            if (canBot) {
              const cb = m.forcedBot[j] ? 0 : -vf;
              const margin = e[k]! - ct - (e[j]! - cb) - vth;
              if (margin > best) {
                best = margin;
                kt = k;
                kb = j;
              }
            }
            // Phase k drives current through its top diode to B+ and back into the shorted phase j.
            if (m.forcedTop[j] && !m.forcedTop[k]) {
              const margin = e[k]! - vf - e[j]!;
              if (margin > best) {
                best = margin;
                kt = k;
                kb = j;
              }
            }
          }
        }
        for (let k = 0; k < 3; k++) {
          // Out of the shorted phase k to the case and back in through phase j's bottom diode.
          if (!m.forcedBot[k]) continue;
          for (let j = 0; j < 3; j++) {
            if (j === k || !m.botOk[j] || mode[j] === 1) continue;
            const margin = e[k]! - e[j]! - vf;
            if (margin > best) {
              best = margin;
              kt = k;
              kb = j;
            }
          }
        }
        if (best > 0) {
          // The two terminals that start conducting: kt to B+ (or kt the shorted-low phase), kb to the case (or the shorted-high one).
          const wantT = m.forcedBot[kt] ? 2 : 1;
          const wantB = m.forcedTop[kb] ? 1 : 2;
          if (mode[kt] !== wantT || mode[kb] !== wantB) {
            for (let k = 0; k < 3; k++) if (!m.forcedTop[k] && !m.forcedBot[k]) mode[k] = 0;
            mode[kt] = wantT;
            mode[kb] = wantB;
            changed = true;
          }
        }
      }
      if (!changed) break;
    }
    i[0] = next[0]!;
    i[1] = next[1]!;
    i[2] = next[2]!;
    const o = 3 * (s - 1);
    modes[o] = mode[0]!;
    modes[o + 1] = mode[1]!;
    modes[o + 2] = mode[2]!;
    phaseA[o] = i[0];
    phaseA[o + 1] = i[1];
    phaseA[o + 2] = i[2];
    outA[s - 1] = sTop;
  }
  rec.endA = i[0]!;
  rec.endB = i[1]!;
}

/** End-of-cycle change of the phase currents A, B and change of the mean output, from `tangentCycle`. */
export interface TangentResult {
  endA: number;
  endB: number;
  mean: number;
}

/**
 * The cycle linearised along a recorded solution: how the end-of-cycle phase
 * currents and the mean output move for a change (dA, dB) of the start
 * currents and for small extra sources: an extra forward drop of diode d at
 * step s (`dropPert`, index d n + s) and an extra DC-side voltage at step s
 * (`busPert`, index s). With the diodes' states held as recorded the cycle is
 * affine in all of these, so this is its exact derivative.
 */
function tangentCycle(
  inp: BridgeCycleInput,
  m: Masks,
  rec: CycleRecord,
  dA: number,
  dB: number,
  dropPert: Float64Array | null,
  busPert: Float64Array | null,
  out: TangentResult,
): TangentResult {
  const n = rec.n;
  const h = (2 * Math.PI) / inp.omegaRadS / n;
  const lOverH = inp.inductanceH / h;
  const g = 1 / (lOverH + inp.phaseResistanceOhm);
  const rth = inp.dcResistanceOhm;
  let d0 = m.phaseOpen[0] ? 0 : dA;
  let d1 = m.phaseOpen[1] ? 0 : dB;
  let d2 = m.phaseOpen[2] ? 0 : -(dA + dB);
  const modes = rec.modes;
  let sum = 0;
  for (let s = 0; s < n; s++) {
    const o = 3 * s;
    const m0 = modes[o]!;
    const m1 = modes[o + 1]!;
    const m2 = modes[o + 2]!;
    const nT = (m0 === 1 ? 1 : 0) + (m1 === 1 ? 1 : 0) + (m2 === 1 ? 1 : 0);
    const nB = (m0 === 2 ? 1 : 0) + (m1 === 2 ? 1 : 0) + (m2 === 2 ? 1 : 0);
    if (nT + nB < 2) {
      d0 = d1 = d2 = 0;
      continue;
    }
    // Extra drop of each phase's conducting diode, as the constant c of integrateCycle.
    let c0 = 0;
    let c1 = 0;
    let c2 = 0;
    if (dropPert) {
      if (m0 === 1 && !m.forcedTop[0]) c0 = dropPert[s]!;
      else if (m0 === 2 && !m.forcedBot[0]) c0 = -dropPert[3 * n + s]!;
      if (m1 === 1 && !m.forcedTop[1]) c1 = dropPert[n + s]!;
      else if (m1 === 2 && !m.forcedBot[1]) c1 = -dropPert[4 * n + s]!;
      if (m2 === 1 && !m.forcedTop[2]) c2 = dropPert[2 * n + s]!;
      else if (m2 === 2 && !m.forcedBot[2]) c2 = -dropPert[5 * n + s]!;
    }
    const a0 = m0 === 0 ? 0 : g * (lOverH * d0 - c0);
    const a1 = m1 === 0 ? 0 : g * (lOverH * d1 - c1);
    const a2 = m2 === 0 ? 0 : g * (lOverH * d2 - c2);
    const aT = (m0 === 1 ? a0 : 0) + (m1 === 1 ? a1 : 0) + (m2 === 1 ? a2 : 0);
    const aB = (m0 === 2 ? a0 : 0) + (m1 === 2 ? a1 : 0) + (m2 === 2 ? a2 : 0);
    const dv = busPert ? busPert[s]! : 0;
    const den = 1 + nT * g * rth;
    const dvN = -((aT - nT * g * dv) / den + aB) / ((nT * g) / den + nB * g);
    const dTop = (aT + nT * g * dvN - nT * g * dv) / den;
    const dBus = dv + rth * dTop;
    d0 = m0 === 1 ? a0 + g * dvN - g * dBus : m0 === 2 ? a0 + g * dvN : 0;
    d1 = m1 === 1 ? a1 + g * dvN - g * dBus : m1 === 2 ? a1 + g * dvN : 0;
    d2 = m2 === 1 ? a2 + g * dvN - g * dBus : m2 === 2 ? a2 + g * dvN : 0;
    sum += dTop;
  }
  out.endA = d0;
  out.endB = d1;
  out.mean = sum / n;
  return out;
}

const { sineTables } = workspace.cache;

/** sin(theta_s - 120 k degrees) at the end of step s, for phases k = 0, 1, 2: index k * (n + 1) + s. */
function sineTable(n: number): Float64Array {
  let t = sineTables.get(n);
  if (!t) {
    t = new Float64Array(3 * (n + 1));
    for (let k = 0; k < 3; k++) {
      for (let s = 0; s <= n; s++) t[k * (n + 1) + s] = detSin((2 * Math.PI * s) / n - (2 * Math.PI * k) / 3);
    }
    sineTables.set(n, t);
  }
  return t;
}

const { harmonicTables } = workspace.cache;

function harmonicTable(n: number): { cos: Float64Array; sin: Float64Array } {
  let t = harmonicTables.get(n);
  if (!t) {
    const cos = new Float64Array(n * MAX_HARMONIC);
    const sin = new Float64Array(n * MAX_HARMONIC);
    for (let k = 1; k <= MAX_HARMONIC; k++) {
      for (let s = 0; s < n; s++) {
        const x = (2 * Math.PI * k * (s + 1)) / n;
        cos[(k - 1) * n + s] = detCos(x);
        sin[(k - 1) * n + s] = detSin(x);
      }
    }
    t = { cos, sin };
    harmonicTables.set(n, t);
  }
  return t;
}

/** Mean, AC rms and dominant harmonic of one cycle's samples. */
export function cycleStats(w: Float64Array): { meanA: number; acRmsA: number; dominantHarmonic: number } {
  const n = w.length;
  let sum = 0;
  for (let s = 0; s < n; s++) sum += w[s]!;
  const mean = sum / n;
  let sq = 0;
  for (let s = 0; s < n; s++) {
    const d = w[s]! - mean;
    sq += d * d;
  }
  const acRms = Math.sqrt(sq / n);
  const t = harmonicTable(n);
  let bestK = 6;
  let best = -1;
  for (let k = 1; k <= MAX_HARMONIC; k++) {
    let re = 0;
    let im = 0;
    const o = (k - 1) * n;
    for (let s = 0; s < n; s++) {
      const d = w[s]! - mean;
      re += d * t.cos[o + s]!;
      im += d * t.sin[o + s]!;
    }
    const mag = re * re + im * im;
    // A small preference for the lower harmonic keeps ties (numerical noise) stable.
    if (mag > best * (1 + 1e-9)) {
      best = mag;
      bestK = k;
    }
  }
  return { meanA: mean, acRmsA: acRms, dominantHarmonic: acRms > 1e-9 ? bestK : 6 };
}

/** A periodic solution with what the table needs of it. */
interface Periodic {
  rec: CycleRecord;
  x0: number;
  x1: number;
  /** d(end)/d(start) of the cycle at the solution: [dA/dA, dA/dB, dB/dA, dB/dB]. */
  jac: [number, number, number, number];
  /** d(mean output)/d(start A, start B). */
  gradMean: [number, number];
}

const tangentScratch = workspace.bridge.tangent;

/**
 * The cycle's Jacobian and the mean's gradient at the recorded solution, into
 * `p`: tangentCycle for the start changes (1, 0) and (0, 1), both carried
 * through one pass.
 */
function linearise(inp: BridgeCycleInput, m: Masks, p: Periodic): void {
  const rec = p.rec;
  const n = rec.n;
  const h = (2 * Math.PI) / inp.omegaRadS / n;
  const lOverH = inp.inductanceH / h;
  const g = 1 / (lOverH + inp.phaseResistanceOhm);
  const rth = inp.dcResistanceOhm;
  const k = g * lOverH;
  let x0 = m.phaseOpen[0] ? 0 : 1;
  let x1 = 0;
  let x2 = m.phaseOpen[2] ? 0 : -1;
  let y0 = 0;
  let y1 = m.phaseOpen[1] ? 0 : 1;
  let y2 = m.phaseOpen[2] ? 0 : -1;
  const modes = rec.modes;
  let sumX = 0;
  let sumY = 0;
  for (let s = 0; s < n; s++) {
    const o = 3 * s;
    const m0 = modes[o]!;
    const m1 = modes[o + 1]!;
    const m2 = modes[o + 2]!;
    const nT = (m0 === 1 ? 1 : 0) + (m1 === 1 ? 1 : 0) + (m2 === 1 ? 1 : 0);
    const nB = (m0 === 2 ? 1 : 0) + (m1 === 2 ? 1 : 0) + (m2 === 2 ? 1 : 0);
    if (nT + nB < 2) {
      x0 = x1 = x2 = y0 = y1 = y2 = 0;
      continue;
    }
    const den = 1 + nT * g * rth;
    const q = (nT * g) / den + nB * g;
    const ax0 = m0 === 0 ? 0 : k * x0;
    const ax1 = m1 === 0 ? 0 : k * x1;
    const ax2 = m2 === 0 ? 0 : k * x2;
    const ay0 = m0 === 0 ? 0 : k * y0;
    const ay1 = m1 === 0 ? 0 : k * y1;
    const ay2 = m2 === 0 ? 0 : k * y2;
    const tX = (m0 === 1 ? ax0 : 0) + (m1 === 1 ? ax1 : 0) + (m2 === 1 ? ax2 : 0);
    const bX = (m0 === 2 ? ax0 : 0) + (m1 === 2 ? ax1 : 0) + (m2 === 2 ? ax2 : 0);
    const tY = (m0 === 1 ? ay0 : 0) + (m1 === 1 ? ay1 : 0) + (m2 === 1 ? ay2 : 0);
    const bY = (m0 === 2 ? ay0 : 0) + (m1 === 2 ? ay1 : 0) + (m2 === 2 ? ay2 : 0);
    const nX = -(tX / den + bX) / q;
    const nY = -(tY / den + bY) / q;
    const topX = (tX + nT * g * nX) / den;
    const topY = (tY + nT * g * nY) / den;
    const busX = rth * topX;
    const busY = rth * topY;
    x0 = m0 === 1 ? ax0 + g * nX - g * busX : m0 === 2 ? ax0 + g * nX : 0;
    x1 = m1 === 1 ? ax1 + g * nX - g * busX : m1 === 2 ? ax1 + g * nX : 0;
    x2 = m2 === 1 ? ax2 + g * nX - g * busX : m2 === 2 ? ax2 + g * nX : 0;
    y0 = m0 === 1 ? ay0 + g * nY - g * busY : m0 === 2 ? ay0 + g * nY : 0;
    y1 = m1 === 1 ? ay1 + g * nY - g * busY : m1 === 2 ? ay1 + g * nY : 0;
    y2 = m2 === 1 ? ay2 + g * nY - g * busY : m2 === 2 ? ay2 + g * nY : 0;
    sumX += topX;
    sumY += topY;
  }
  p.jac[0] = x0;
  p.jac[2] = x1;
  p.gradMean[0] = sumX / n;
  p.jac[1] = y0;
  p.jac[3] = y1;
  p.gradMean[1] = sumY / n;
}

/**
 * The periodic solution's first-order response to the sources of a
 * linearised pass: the shift of the periodic start currents solves
 * (I - J) dx = d(end), and the mean follows them.
 */
function periodicResponse(
  inp: BridgeCycleInput,
  m: Masks,
  p: Periodic,
  dropPert: Float64Array | null,
  busPert: Float64Array | null,
): number {
  const t = tangentCycle(inp, m, p.rec, 0, 0, dropPert, busPert, tangentScratch);
  const [j00, j01, j10, j11] = p.jac;
  const a00 = 1 - j00;
  const a01 = -j01;
  const a10 = -j10;
  const a11 = 1 - j11;
  const det = a00 * a11 - a01 * a10;
  if (!(Math.abs(det) > 1e-12)) return t.mean;
  const dx0 = (t.endA * a11 - a01 * t.endB) / det;
  const dx1 = (a00 * t.endB - a10 * t.endA) / det;
  return t.mean + p.gradMean[0] * dx0 + p.gradMean[1] * dx1;
}

/**
 * Shooting for the periodic solution: Newton on the start-of-cycle phase
 * currents with the cycle's exact Jacobian (the map is affine while no diode
 * changes its pattern, so from a nearby guess it converges in a step or
 * two). Two records are used in turn so that a rejected trial leaves the
 * accepted solution's record intact.
 */
function solvePeriodic(inp: BridgeCycleInput, m: Masks, guess: [number, number] | undefined, recs: [CycleRecord, CycleRecord]): Periodic {
  const scale = Math.max(1e-6, inp.emfPeakV / Math.max(1e-9, inp.omegaRadS * inp.inductanceH + inp.phaseResistanceOhm));
  const tol = 1e-6 * scale;
  let x0 = guess ? guess[0] : 0;
  let x1 = guess ? guess[1] : 0;
  let cur = recs[0];
  let spare = recs[1];
  integrateCycle(inp, m, x0, x1, cur);
  let resid = Math.abs(cur.endA - x0) + Math.abs(cur.endB - x1);
  const p: Periodic = { rec: cur, x0, x1, jac: [0, 0, 0, 0], gradMean: [0, 0] };
  let stalls = 0;
  for (let iter = 0; iter < 40 && resid >= tol; iter++) {
    p.rec = cur;
    linearise(inp, m, p);
    const r0 = cur.endA - x0;
    const r1 = cur.endB - x1;
    const j00 = p.jac[0] - 1;
    const j01 = p.jac[1];
    const j10 = p.jac[2];
    const j11 = p.jac[3] - 1;
    const det = j00 * j11 - j01 * j10;
    let d0 = r0;
    let d1 = r1;
    if (Number.isFinite(det) && Math.abs(det) > 1e-12) {
      d0 = -(r0 * j11 - r1 * j01) / det;
      d1 = -(j00 * r1 - j10 * r0) / det;
    }
    // Damp steps larger than the natural current scale (the map is only piecewise affine).
    const size = Math.abs(d0) + Math.abs(d1);
    const limit = 0.5 * scale;
    let k = size > limit ? limit / size : 1;
    let accepted = false;
    for (let half = 0; half < 6 && !accepted; half++, k *= 0.5) {
      const nx0 = x0 + k * d0;
      const nx1 = x1 + k * d1;
      integrateCycle(inp, m, nx0, nx1, spare);
      const nresid = Math.abs(spare.endA - nx0) + Math.abs(spare.endB - nx1);
      if (nresid < resid) {
        x0 = nx0;
        x1 = nx1;
        resid = nresid;
        const t = cur;
        cur = spare;
        spare = t;
        accepted = true;
      }
    }
    if (!accepted) {
      // Newton stalled (the pattern changes between here and the solution):
      // let the cycle map itself pull the start currents in for a while, then try again.
      if (++stalls > 4) break;
      for (let cycle = 0; cycle < 40 && resid >= tol; cycle++) {
        x0 = cur.endA;
        x1 = cur.endB;
        integrateCycle(inp, m, x0, x1, spare);
        resid = Math.abs(spare.endA - x0) + Math.abs(spare.endB - x1);
        const t = cur;
        cur = spare;
        spare = t;
      }
    }
  }
  // Still not there: iterate the cycle map a while longer. (A step's diode
  // pattern can flip with the start currents, so the discrete map may have
  // no exact fixed point, only a cycle that stays within a small residual.)
  for (let cycle = 0; cycle < 300 && resid >= tol; cycle++) {
    x0 = cur.endA;
    x1 = cur.endB;
    integrateCycle(inp, m, x0, x1, spare);
    resid = Math.abs(spare.endA - x0) + Math.abs(spare.endB - x1);
    const t = cur;
    cur = spare;
    spare = t;
  }
  p.rec = cur;
  p.x0 = x0;
  p.x1 = x1;
  return p;
}

/** RMS and mean of each phase current over a recorded cycle. */
function phaseStats(rec: CycleRecord): { rms: [number, number, number]; mean: [number, number, number] } {
  const n = rec.n;
  const sq = [0, 0, 0];
  const sum = [0, 0, 0];
  for (let s = 0; s < n; s++) {
    for (let k = 0; k < 3; k++) {
      const i = rec.phaseA[3 * s + k]!;
      sq[k] = sq[k]! + i * i;
      sum[k] = sum[k]! + i;
    }
  }
  return {
    rms: [Math.sqrt(sq[0]! / n), Math.sqrt(sq[1]! / n), Math.sqrt(sq[2]! / n)],
    mean: [sum[0]! / n, sum[1]! / n, sum[2]! / n],
  };
}

/**
 * Periodic steady state of the bridge: Newton on the start-of-cycle phase
 * currents so that one cycle returns to them. `guess` speeds it up.
 */
export function periodicBridge(inp: BridgeCycleInput, guess?: [number, number]): BridgeCycleResult {
  const m = masksOf(inp.topology);
  const n = inp.stepsPerCycle;
  const p = solvePeriodic(inp, m, guess, [newRecord(n), newRecord(n)]);
  const waveform = new Float64Array(p.rec.outA);
  const stats = cycleStats(waveform);
  const phases = phaseStats(p.rec);
  return { ...stats, waveformA: waveform, startA: [p.x0, p.x1], phaseRmsA: phases.rms, phaseMeanA: phases.mean };
}

// ---- One pulse of discontinuous conduction --------------------------------

/**
 * ln x for x > 0, to about 1e-7 absolute: a table of ln over one binade with
 * straight lines between, and the binary exponent. Built from the basic
 * operations and detLog, so every engine gives the same bits. For building
 * the table only, where millions of logarithms are taken.
 */
const LN_TABLE_SIZE = 1024;
const LN_TABLE = (() => {
  const t = new Float64Array(LN_TABLE_SIZE + 1);
  for (let k = 0; k <= LN_TABLE_SIZE; k++) t[k] = detLog(1 + k / LN_TABLE_SIZE);
  return t;
})();
const LN2 = detLog(2);
const lnWordsF64 = new Float64Array(1);
const lnWordsU32 = new Uint32Array(lnWordsF64.buffer);
const LN_HIGH_WORD = (() => {
  lnWordsF64[0] = 2;
  return lnWordsU32[0] === 0 ? 1 : 0;
})();

function tableLog(x: number): number {
  if (!(x >= 2.2250738585072014e-308)) return x > 0 ? tableLog(x * 18014398509481984) - 54 * LN2 : -Infinity;
  lnWordsF64[0] = x;
  const biased = (lnWordsU32[LN_HIGH_WORD]! >>> 20) & 0x7ff;
  // Mantissa in [1, 2): set the exponent field to that of 1 (exact).
  lnWordsU32[LN_HIGH_WORD] = (lnWordsU32[LN_HIGH_WORD]! & 0x800fffff) | 0x3ff00000;
  const f = (lnWordsF64[0]! - 1) * LN_TABLE_SIZE;
  const k = Math.floor(f);
  const lo = LN_TABLE[k]!;
  return (biased - 1023) * LN2 + lo + (LN_TABLE[k + 1]! - lo) * (f - k);
}

/**
 * Where a diode's Shockley drop b ln(1 + i K) is taken against its drop at a
 * reference current, b ln((i + eps) / ref) stands for it: K is about 1e8 to
 * 1e10 for these diodes, so the two differ only below eps (e^-18) times the
 * reference, where no charge flows.
 */
const SHOCKLEY_EPS = 1.5e-8;

interface PulseResult {
  /** Integral of the current over the pulse (per unit: E/X times electrical radians). */
  charge: number;
  /** Electrical angle from the current's first reaching 1e-6 to its end. */
  width: number;
}

const PULSE_STEPS_PER_RADIAN = 60;
const PULSE_ROTATION = Object.freeze({ cos: detCos(1 / PULSE_STEPS_PER_RADIAN), sin: detSin(1 / PULSE_STEPS_PER_RADIAN) });
const LOG_SHOCKLEY_EPS = detLog(SHOCKLEY_EPS);

/**
 * One current pulse of discontinuous conduction: two phases and two diodes
 * in series between the rails, from zero current back to zero, against a
 * stiff DC side. Per unit (E = 1, X = 1 per phase): 2 di/dtheta = sqrt3
 * cos(theta) - up - 2 b ln((i + eps)/1) - 2 r i, with up = (V + 2 V_f(E/X))/E
 * (each diode's drop at E/X folded in, as the 'natural' reference does).
 * Implicit trapezoidal steps (Newton on the current), since at small
 * currents Shockley's law is stiff. Between pulses every current is zero,
 * so each pulse is the same and the mean output is the number of pulses
 * per cycle times the charge over 2 pi.
 */
function pulse(up: number, r: number, b: number, out: PulseResult): PulseResult {
  const s3 = Math.sqrt(3);
  const h = 1 / PULSE_STEPS_PER_RADIAN;
  const rc = PULSE_ROTATION.cos;
  const rs = PULSE_ROTATION.sin;
  // From theta = -pi/2 (cos 0, sin -1): no pulse starts before the line voltage's rise.
  let c = 0;
  let sn = -1;
  let i = 0;
  let charge = 0;
  let started = false;
  let startTheta = 0;
  let theta = -Math.PI / 2;
  const forcing = (cosine: number, current: number) =>
    0.5 * (s3 * cosine - up - 2 * b * (current > 0 ? tableLog(current + SHOCKLEY_EPS) : LOG_SHOCKLEY_EPS) - 2 * r * current);
  let fn = forcing(c, 0);
  const limit = Math.ceil(2 * Math.PI * PULSE_STEPS_PER_RADIAN);
  for (let k = 0; k < limit; k++) {
    const c1 = c * rc - sn * rs;
    const s1 = sn * rc + c * rs;
    // Solve x = i + (h/2)(fn + F(theta + h, x)) for x >= 0.
    const gAt = (x: number) => x - i - 0.5 * h * (fn + forcing(c1, x));
    let x: number;
    if (gAt(0) >= 0) x = 0;
    else {
      // Newton from the explicit step (gAt is concave and rising: from above it converges without overshoot).
      x = i + h * fn;
      if (!(x > 0)) x = i > 0 ? i : 1e-12;
      for (let it = 0; it < 30; it++) {
        const gx = gAt(x);
        const dg = 1 + 0.5 * h * (b / (x + SHOCKLEY_EPS) + r);
        let nx = x - gx / dg;
        if (!(nx > 0)) nx = 0.5 * x;
        const done = Math.abs(nx - x) <= 1e-12 + 1e-8 * x;
        x = nx;
        if (done) break;
      }
    }
    charge += 0.5 * h * (i + x);
    theta += h;
    c = c1;
    sn = s1;
    if (!started && x > 1e-6) {
      started = true;
      startTheta = theta;
    }
    if (started && x === 0) {
      out.charge = charge;
      out.width = theta - startTheta;
      return out;
    }
    i = x;
    fn = forcing(c, i);
  }
  out.charge = charge;
  out.width = started ? theta - startTheta : 0;
  return out;
}

/** Diode pairs (top k, bottom j) in the order their line voltage peaks, 60 degrees apart. */
const PULSE_ORDER: readonly (readonly [number, number])[] = [
  [2, 1],
  [0, 1],
  [0, 2],
  [1, 2],
  [1, 0],
  [2, 0],
];

/** The pulses a topology of working and open diodes makes per cycle, and the smallest gap between two. */
function pulsePattern(m: Masks): { count: number; gap: number } {
  const present: number[] = [];
  PULSE_ORDER.forEach(([k, j], idx) => {
    if (m.topOk[k] && m.botOk[j]) present.push(idx);
  });
  let gap = 6;
  for (let a = 0; a < present.length; a++) {
    const next = present[(a + 1) % present.length]!;
    const d = (next - present[a]! + 6) % 6 || 6;
    if (d < gap) gap = d;
  }
  return { count: present.length, gap: (gap * Math.PI) / 3 };
}

// ---- The cached characteristic -------------------------------------------

/**
 * One axis of a table: its nodes (increasing, not evenly spaced) and an
 * index of them on an even fine grid, so a lookup finds its interval with
 * one division and at most a step or two along the nodes.
 */
interface Axis {
  nodes: Float64Array;
  /** 1 / (nodes[i + 1] - nodes[i]). */
  inverseSpacing: Float64Array;
  /** Node at or below k * indexStep. */
  index: Uint16Array;
  indexStep: number;
}

function makeAxis(values: readonly number[]): Axis {
  const nodes = Float64Array.from(values);
  const inverseSpacing = new Float64Array(nodes.length - 1);
  let minSpacing = Infinity;
  for (let i = 0; i + 1 < nodes.length; i++) {
    const d = nodes[i + 1]! - nodes[i]!;
    inverseSpacing[i] = 1 / d;
    if (d < minSpacing) minSpacing = d;
  }
  const indexStep = minSpacing / 2;
  const span = nodes[nodes.length - 1]! - nodes[0]!;
  const index = new Uint16Array(Math.ceil(span / indexStep) + 2);
  let i = 0;
  for (let k = 0; k < index.length; k++) {
    const x = nodes[0]! + k * indexStep;
    while (i + 2 < nodes.length && nodes[i + 1]! <= x) i++;
    index[k] = i;
  }
  return { nodes, inverseSpacing, index, indexStep };
}

/** Evenly spaced values from a to b (both included) in steps of d. */
function span(a: number, b: number, d: number): number[] {
  const out: number[] = [];
  const count = Math.round((b - a) / d);
  for (let k = 0; k <= count; k++) out.push(a + (k * (b - a)) / count);
  return out;
}

/**
 * The u axis of working and open diodes: coarse up to 1.5, then fine across
 * the conduction edge (sqrt 3), densest where the bridge's conduction turns
 * from continuous to discontinuous (u about 1.63-1.65: each line pair's
 * current pulse ends before the next begins, and the output's slope breaks).
 */
const U_AXIS = makeAxis([
  ...span(0, 1.5, 0.075),
  ...span(1.52, 1.6, 0.02),
  ...span(1.61, 1.62, 0.01),
  ...span(1.625, 1.66, 0.005),
  ...span(1.67, 1.68, 0.01),
  ...span(1.7, 1.84, 0.02),
]);
/** A shorted diode's u axis (in its coordinate v = u - phi, edge also at sqrt 3). */
const U_AXIS_SHORTED = makeAxis([...span(0, 0.6, 0.025), ...span(0.7, 1.5, 0.1), ...span(1.52, 1.84, 0.02)]);
/**
 * Working and open diodes: s = sqrt(r) from 0 (the lossless limit, which the
 * output approaches at very high speed) to 1.8, finer at small s where the
 * output moves fastest with resistance.
 */
const S_AXIS = makeAxis([...span(0, 0.2, 0.05), ...span(0.3, 0.6, 0.1), 0.8, 1.0, 1.2, 1.5, 1.8]);
/**
 * A shorted diode: its circulating current is held back only by resistance
 * and the other diodes' drops, so the output moves fast with r and the drop;
 * a finer axis that stops short of r = 0 (where that current has no limit).
 */
const S_AXIS_SHORTED = makeAxis([...span(0.15, 0.35, 0.025), ...span(0.4, 0.6, 0.05), 0.7, 0.8, 1.0, 1.2, 1.5, 1.8]);
const TABLE_STEPS_PER_CYCLE = 360;

/** Drop levels (V_f / E at the current E/X) of a shorted-diode table. */
const SHORTED_DROP_LEVELS = [0, 0.01, 0.02, 0.04, 0.08, 0.12] as const;
const SHORTED_DROP_AXIS = makeAxis(SHORTED_DROP_LEVELS);

export interface BridgeTable {
  /**
   * Where each diode's drop is taken for the table's u:
   *  - 'output': at the mean output current (working and open diodes); a
   *    constant drop then folds exactly into u, one layer;
   *  - 'natural': at the current E/X (a shorted diode, whose circulating
   *    current is far from the output); the shorted diode has no drop, so
   *    its phase sits V_f apart from the others and phi = V_f / E is a third
   *    coordinate, and u is taken as v = u - phi so that the conduction edge
   *    stays at sqrt 3 in every layer.
   */
  dropReference: 'output' | 'natural';
  /** phi of each layer. */
  dropLevels: readonly number[];
  /** The drop levels as an axis (natural tables). */
  drops: Axis | null;
  u: Axis;
  s: Axis;
  /** Whether the DC side's resistance term is kept (faulted bridges). */
  busTerm: boolean;
  /** sqrt of the mean output in units of E/X, signed: negative past the conduction edge. [layer][s][u]. */
  root: Float64Array;
  /** d(root)/db, b = n Vt / E: each diode's own Shockley drop. */
  rootPerB: Float64Array;
  /** d(root)/d(rho), rho = R_dc / X (zero when busTerm is false). */
  rootPerRho: Float64Array;
  /** AC rms of the output in units of E/X. */
  acRms: Float64Array;
  dominant: Uint8Array;
  /** Sum over the three phases of the rms current squared, in units of (E/X)^2 (the stator's copper loss over R). */
  phaseSquares: Float64Array;
  /**
   * Size of the standing DC part of the phase currents as a stator space
   * vector, (2/3)|I_A + a I_B + a^2 I_C| of the three phase means, in units
   * of E/X: zero for a healthy bridge; an open diode leaves its phase's DC
   * current here. Its stationary field is what the rotor's iron sees (see
   * fluxWithStatorDc in model.ts).
   */
  dcVector: Float64Array;
  /** Largest mean output anywhere in the table (units of E/X). */
  maxMean: number;
}

const tables = workspace.cache.bridgeTables;

export function topologyKey(t: BridgeTopology): string {
  const norm = (l: readonly number[]) => [...new Set(l)].sort((a, b) => a - b).join(',');
  return `o${norm(t.openDiodes)}|s${norm(t.shortedDiodes)}|p${norm(t.openPhases)}`;
}

/** Below this mean (units of E/X) a grid point counts as past the conduction edge. */
const EDGE_MEAN = 1e-6;
/**
 * A diode current below this fraction of its reference is taken at it in the
 * drop's logarithm: Shockley's drop never falls below zero, which for these
 * diodes is reached about e^-18 below the working current.
 */
const LOG_FLOOR = 1e-8;

function buildTable(topology: BridgeTopology): BridgeTable {
  const shorted = topology.shortedDiodes.length > 0;
  const faulted = shorted || topology.openDiodes.length > 0 || topology.openPhases.length > 0;
  const dropReference: BridgeTable['dropReference'] = shorted ? 'natural' : 'output';
  const dropLevels: readonly number[] = shorted ? SHORTED_DROP_LEVELS : [0];
  const uAxis = shorted ? U_AXIS_SHORTED : U_AXIS;
  const sAxis = shorted ? S_AXIS_SHORTED : S_AXIS;
  const uNodes = uAxis.nodes;
  const U_POINTS = uNodes.length;
  const S_POINTS = sAxis.nodes.length;
  const layer = S_POINTS * U_POINTS;
  const size = dropLevels.length * layer;
  const mean = new Float64Array(size);
  const perB = new Float64Array(size);
  const perRho = new Float64Array(size);
  const acRms = new Float64Array(size);
  const dominant = new Uint8Array(size);
  const phaseSquares = new Float64Array(size);
  const dcVector = new Float64Array(size);
  /** Whether a grid point's conduction is discontinuous (every pulse starts from zero current). */
  const discontinuous = new Uint8Array(size);
  const m = masksOf(topology);
  const pattern = pulsePattern(m);
  const workspaces = new Map<number, { recs: [CycleRecord, CycleRecord]; dropPert: Float64Array; busPert: Float64Array }>();
  const workspace = (steps: number) => {
    let w = workspaces.get(steps);
    if (!w) {
      w = { recs: [newRecord(steps), newRecord(steps)], dropPert: new Float64Array(6 * steps), busPert: new Float64Array(steps) };
      workspaces.set(steps, w);
    }
    return w;
  };
  const inp: BridgeCycleInput = {
    topology,
    emfPeakV: 1,
    omegaRadS: 1,
    inductanceH: 1,
    phaseResistanceOhm: 0,
    diodeDropV: 0,
    dcTheveninV: 0,
    dcResistanceOhm: 0,
    stepsPerCycle: TABLE_STEPS_PER_CYCLE,
  };
  let rowStart: [number, number] | undefined;
  dropLevels.forEach((phi, li) => {
    for (let si = 0; si < S_POINTS; si++) {
      const s = sAxis.nodes[si]!;
      inp.phaseResistanceOhm = s * s;
      inp.diodeDropV = phi;
      const n = stepsForRow(s, shorted);
      inp.stepsPerCycle = n;
      const { recs, dropPert, busPert } = workspace(n);
      // Each row starts from where the last one started (a shorted diode's circulating current is far from zero).
      let guess: [number, number] | undefined = rowStart;
      let lastStart: [number, number] = [0, 0];
      for (let ui = U_POINTS - 1; ui >= 0; ui--) {
        // 'output': the drop is folded into u; 'natural': u = v + phi, the bus at u - 2 phi.
        inp.dcTheveninV = uNodes[ui]! - phi;
        const p = solvePeriodic(inp, m, guess, recs);
        // The next point starts from this one's solution carried on along the row's slope (the start
        // currents move smoothly with u), so Newton begins close.
        const prevStart = ui < U_POINTS - 1 ? lastStart : null;
        lastStart = [p.x0, p.x1];
        if (prevStart !== null && ui > 0) {
          const w = (uNodes[ui - 1]! - uNodes[ui]!) / (uNodes[ui]! - uNodes[ui + 1]!);
          guess = [p.x0 + (p.x0 - prevStart[0]) * w, p.x1 + (p.x1 - prevStart[1]) * w];
        } else guess = lastStart;
        if (ui === U_POINTS - 1) rowStart = lastStart;
        const rec = p.rec;
        const idx = li * layer + si * U_POINTS + ui;
        const stats = cycleStats(rec.outA);
        const g = stats.meanA;
        mean[idx] = g;
        acRms[idx] = stats.acRmsA;
        dominant[idx] = stats.dominantHarmonic;
        let squares = 0;
        for (let j = 0; j < 3 * n; j++) squares += rec.phaseA[j]! * rec.phaseA[j]!;
        phaseSquares[idx] = squares / n;
        // A healthy bridge's phase currents have no DC part (each is the last one shifted by a third of a cycle).
        if (faulted) dcVector[idx] = dcSpaceVector(rec);
        discontinuous[idx] = !shorted && conductionStarts(rec) === pattern.count ? 1 : 0;
        if (!(g > EDGE_MEAN)) continue;
        linearise(inp, m, p);
        // Each diode's drop as Shockley has it, to first order in b: b ln(i / i_ref) more than at i_ref.
        const ref = dropReference === 'output' ? g : 1;
        const floor = LOG_FLOOR * ref;
        // (Only a conducting diode's drop enters the cycle: tangentCycle reads no other.)
        for (let st = 0; st < n; st++) {
          for (let k = 0; k < 3; k++) {
            const mode = rec.modes[3 * st + k]!;
            if (mode === 0) continue;
            const i = mode === 1 ? rec.phaseA[3 * st + k]! : -rec.phaseA[3 * st + k]!;
            dropPert[(mode === 1 ? k : k + 3) * n + st] = tableLog((i > floor ? i : floor) / ref);
          }
        }
        perB[idx] = periodicResponse(inp, m, p, dropPert, null);
        if (faulted) {
          // The DC side's resistance carries the AC part of the output (its mean part is in u already).
          for (let st = 0; st < n; st++) busPert[st] = rec.outA[st]! - g;
          perRho[idx] = periodicResponse(inp, m, p, null, busPert);
        }
      }
    }
  });
  // To square roots: d(root) = d(mean) / (2 root).
  const root = new Float64Array(size);
  const rootPerB = new Float64Array(size);
  const rootPerRho = new Float64Array(size);
  let maxMean = 0;
  for (let idx = 0; idx < size; idx++) {
    const g = mean[idx]!;
    if (g > maxMean) maxMean = g;
    if (!(g > EDGE_MEAN)) continue;
    const r = Math.sqrt(g);
    root[idx] = r;
    rootPerB[idx] = perB[idx]! / (2 * r);
    rootPerRho[idx] = perRho[idx]! / (2 * r);
  }
  if (!shorted) {
    for (let si = 0; si < S_POINTS; si++) {
      const sv = sAxis.nodes[si]!;
      exactNearEdge(uNodes, si * U_POINTS, sv * sv, mean, discontinuous, root, rootPerB, pattern);
    }
  }
  for (let li = 0; li < dropLevels.length; li++) {
    for (let si = 0; si < S_POINTS; si++) {
      const row = li * layer + si * U_POINTS;
      // Past the last point that conducts, carry the root on as a straight line (the output goes as the
      // square of the distance to the edge), with the first-order terms of that last point.
      let last = -1;
      for (let ui = U_POINTS - 1; ui >= 0; ui--) {
        if (mean[row + ui]! > EDGE_MEAN) {
          last = ui;
          break;
        }
      }
      if (last >= 1 && last < U_POINTS - 1) {
        const slope = (root[row + last]! - root[row + last - 1]!) / (uNodes[last]! - uNodes[last - 1]!);
        for (let ui = last + 1; ui < U_POINTS; ui++) {
          root[row + ui] = root[row + last]! + slope * (uNodes[ui]! - uNodes[last]!);
          rootPerB[row + ui] = rootPerB[row + last]!;
          rootPerRho[row + ui] = rootPerRho[row + last]!;
        }
      }
      if (!shorted) {
        // The output never rises with u; remove integration noise that would say otherwise.
        for (let ui = U_POINTS - 2; ui >= 0; ui--) {
          if (root[row + ui]! < root[row + ui + 1]!) root[row + ui] = root[row + ui + 1]!;
        }
      }
    }
  }
  // Nor, with working or open diodes, with more resistance (s): with the grid
  // monotone in u and s, so is every interpolation, and the output curve
  // cannot fall as speed rises. (A shorted diode's circulating current is
  // damped by resistance, so there output may rise with r, and may even rise
  // with u; left as computed.)
  if (!shorted) {
    for (let si = 1; si < S_POINTS; si++) {
      for (let ui = 0; ui < U_POINTS; ui++) {
        const idx = si * U_POINTS + ui;
        root[idx] = Math.min(root[idx]!, root[idx - U_POINTS]!);
      }
    }
  }
  return { dropReference, dropLevels, drops: shorted ? SHORTED_DROP_AXIS : null, u: uAxis, s: sAxis, busTerm: faulted, root, rootPerB, rootPerRho, acRms, dominant, phaseSquares, dcVector, maxMean };
}

/** (2/3)|I_A + a I_B + a^2 I_C| of the phase currents' means over a recorded cycle. */
function dcSpaceVector(rec: CycleRecord): number {
  const n = rec.n;
  let a = 0;
  let b = 0;
  let c = 0;
  for (let st = 0; st < n; st++) {
    a += rec.phaseA[3 * st]!;
    b += rec.phaseA[3 * st + 1]!;
    c += rec.phaseA[3 * st + 2]!;
  }
  const re = (2 / 3) * (a - 0.5 * (b + c));
  const im = (2 / 3) * SQRT3_OVER_2 * (b - c);
  return Math.sqrt(re * re + im * im) / n;
}

const SQRT3_OVER_2 = Math.sqrt(3) / 2;

/**
 * Steps per cycle for a row of the table. A shorted diode's circulating
 * current is damped only by the resistance, and at small r the integration's
 * own error (backward Euler's, which acts like a little extra resistance)
 * becomes a visible part of it: those rows take finer steps.
 */
function stepsForRow(s: number, shorted: boolean): number {
  if (!shorted) return TABLE_STEPS_PER_CYCLE;
  if (s < 0.2) return 2 * TABLE_STEPS_PER_CYCLE;
  return TABLE_STEPS_PER_CYCLE;
}

/** How many pulses of conduction a recorded cycle has: steps where current starts after none flowed. */
function conductionStarts(rec: CycleRecord): number {
  const n = rec.n;
  const flowing = (s: number) => {
    const o = 3 * s;
    return (rec.modes[o]! !== 0 ? 1 : 0) + (rec.modes[o + 1]! !== 0 ? 1 : 0) + (rec.modes[o + 2]! !== 0 ? 1 : 0) >= 2;
  };
  let starts = 0;
  let before = flowing(n - 1);
  for (let st = 0; st < n; st++) {
    const now = flowing(st);
    if (now && !before) starts++;
    before = now;
  }
  return starts;
}

/** The b at which the near-edge term is taken exactly (b = n Vt / E is about 0.005 near cut-in). */
const NEAR_EDGE_B = 0.005;
/** Below the first discontinuous grid point, the first-order term is bridged over this much of u. */
const BRIDGE_DU = 0.015;
/** Further from the edge the first-order term is within a few tenths of a per cent (an open phase conducts in pulses from low u). */
const EXACT_FROM_U = 1.55;

/**
 * Near the conduction edge, where every current pulse starts from zero, the
 * first-order term in b is far off (the drop at small currents moves the
 * pulse's start and end, which is not small). There the pulse is solved
 * with each diode's Shockley drop as it is (see `pulse`) at b = NEAR_EDGE_B,
 * and the b term of those grid points becomes the secant to it. On this
 * table's u (drops at the output current) a grid point u is the pulse at
 * up with up + 2 b ln(mean(up)) = u, found by the secant method. Between the
 * last grid point of continuous conduction and the first solved pulse the
 * term is bridged by a straight line (where the two regimes meet, the
 * first-order term spikes).
 */
function exactNearEdge(
  uNodes: Float64Array,
  row: number,
  r: number,
  mean: Float64Array,
  discontinuous: Uint8Array,
  root: Float64Array,
  rootPerB: Float64Array,
  pattern: { count: number; gap: number },
): void {
  const points = uNodes.length;
  let lastPositive = -1;
  for (let ui = points - 1; ui >= 0; ui--) {
    if (mean[row + ui]! > EDGE_MEAN) {
      lastPositive = ui;
      break;
    }
  }
  let firstDisc = -1;
  for (let ui = lastPositive; ui >= 0 && uNodes[ui]! >= EXACT_FROM_U; ui--) {
    if (!discontinuous[row + ui]) break;
    firstDisc = ui;
  }
  if (firstDisc < 0) return;
  const b = NEAR_EDGE_B;
  const res: PulseResult = { charge: 0, width: 0 };
  const meanAtUp = (up: number) => {
    pulse(up, r, b, res);
    return res.width < pattern.gap ? (pattern.count * res.charge) / (2 * Math.PI) : NaN;
  };
  let firstValid = -1;
  let lastValid = -1;
  // up - u of the last point solved: it moves slowly along the row, so it starts the next.
  let shift = NaN;
  for (let ui = firstDisc; ui <= lastPositive; ui++) {
    const idx = row + ui;
    const u = uNodes[ui]!;
    const g0 = mean[idx]!;
    // Secant on f(up) = up + 2 b ln(mean(up)) - u from up = u - 2 b ln(g0) (or the last shift).
    let x0 = Number.isFinite(shift) ? u + shift : u - 2 * b * tableLog(g0);
    const m0 = meanAtUp(x0);
    let f0 = m0 > EDGE_MEAN ? x0 + 2 * b * tableLog(m0) - u : NaN;
    let x1 = x0 - 0.002;
    let m1 = meanAtUp(x1);
    let f1 = m1 > EDGE_MEAN ? x1 + 2 * b * tableLog(m1) - u : NaN;
    let solved = NaN;
    for (let it = 0; it < 12 && Number.isFinite(f0) && Number.isFinite(f1); it++) {
      if (Math.abs(f1) < 1e-8) {
        solved = m1;
        break;
      }
      const x2 = x1 - (f1 * (x1 - x0)) / (f1 - f0);
      if (!Number.isFinite(x2)) break;
      x0 = x1;
      f0 = f1;
      x1 = x2;
      m1 = meanAtUp(x1);
      f1 = m1 > EDGE_MEAN ? x1 + 2 * b * tableLog(m1) - u : NaN;
    }
    if (!(solved > EDGE_MEAN)) continue;
    shift = x1 - u;
    rootPerB[idx] = (Math.sqrt(solved) - root[idx]!) / b;
    if (firstValid < 0) firstValid = ui;
    lastValid = ui;
  }
  if (firstValid < 0) return;
  // Past the last solved point, its term carries on (as the root's own extension does).
  for (let ui = lastValid + 1; ui <= lastPositive; ui++) rootPerB[row + ui] = rootPerB[row + lastValid]!;
  // Bridge from the last point of continuous conduction well below the meeting of the regimes.
  let below = firstValid - 1;
  while (below > 0 && uNodes[below]! > uNodes[firstDisc]! - BRIDGE_DU) below--;
  if (below < 0 || below >= firstValid - 1) return;
  const a = rootPerB[row + below]!;
  const z = rootPerB[row + firstValid]!;
  const ua = uNodes[below]!;
  const uz = uNodes[firstValid]!;
  for (let ui = below + 1; ui < firstValid; ui++) rootPerB[row + ui] = a + ((z - a) * (uNodes[ui]! - ua)) / (uz - ua);
}

/** The cached characteristic of a topology (built on first use: 0.1-0.5 s, the shorted diode's three-dimensional one the longest). */
export function bridgeTable(topology: BridgeTopology): BridgeTable {
  const key = topologyKey(topology);
  let t = tables.get(key);
  if (!t) {
    t = buildTable(topology);
    tables.set(key, t);
  }
  return t;
}

/** Result of a table lookup: values in units of E/X, and d(mean)/du. */
export interface TableLookup {
  mean: number;
  dMeanDu: number;
  acRms: number;
  dominant: number;
  /** Sum over the phases of the rms current squared, in units of (E/X)^2. */
  phaseSquares: number;
  /** The DC space vector of the phase currents (see BridgeTable.dcVector), in units of E/X. */
  dcVector: number;
}

/**
 * Where a lookup falls on the grid: the row below sqrt(r) and the weight
 * toward the next, the drop layer below phi and its weight, and the
 * first-order coefficients b and rho. The bridge's operating point asks many
 * u at one r, so it places these once (see bridgeOperatingPoint).
 */
export interface Placement {
  is: number;
  ts: number;
  li: number;
  tl: number;
  b: number;
  rho: number;
}

/** Where x falls on an axis (clamped to its ends): the node below and the weight toward the next. */
function locate(a: Axis, x: number, out: { i: number; t: number }): void {
  const nodes = a.nodes;
  const last = nodes.length - 1;
  if (!(x > nodes[0]!)) {
    out.i = 0;
    out.t = 0;
    return;
  }
  if (x >= nodes[last]!) {
    out.i = last - 1;
    out.t = 1;
    return;
  }
  let i = a.index[Math.floor((x - nodes[0]!) / a.indexStep)]!;
  while (x >= nodes[i + 1]!) i++;
  out.i = i;
  out.t = (x - nodes[i]!) * a.inverseSpacing[i]!;
}

const locateScratch = workspace.bridge.locate;

function place(t: BridgeTable, r: number, phi: number, b: number, rho: number, out: Placement): Placement {
  locate(t.s, Math.sqrt(r > 0 ? r : 0), locateScratch);
  out.is = locateScratch.i;
  out.ts = locateScratch.t;
  if (t.drops === null) {
    out.li = 0;
    out.tl = 0;
  } else {
    locate(t.drops, phi, locateScratch);
    out.li = locateScratch.i;
    out.tl = locateScratch.t;
  }
  out.b = b;
  out.rho = t.busTerm ? rho : 0;
  return out;
}

/** Where u falls on the u axis: the column below it, the weight toward the next and the spacing there. */
export interface Column {
  iu: number;
  tu: number;
  inverseDu: number;
}

const columnScratch = workspace.bridge.column;

function column(a: Axis, u: number, out: Column): Column {
  locate(a, u, locateScratch);
  out.iu = locateScratch.i;
  out.tu = locateScratch.t;
  out.inverseDu = a.inverseSpacing[locateScratch.i]!;
  return out;
}

/** The root (with its first-order terms) bilinear in u and s within one drop layer, and its slope in u. */
function rootInLayer(t: BridgeTable, layerOffset: number, c: Column, pl: Placement, out: { root: number; slope: number }): void {
  const uPoints = t.u.nodes.length;
  const i00 = layerOffset + pl.is * uPoints + c.iu;
  const i10 = i00 + uPoints;
  const r = t.root;
  const rb = t.rootPerB;
  const b = pl.b;
  let v00 = r[i00]! + b * rb[i00]!;
  let v01 = r[i00 + 1]! + b * rb[i00 + 1]!;
  let v10 = r[i10]! + b * rb[i10]!;
  let v11 = r[i10 + 1]! + b * rb[i10 + 1]!;
  const rho = pl.rho;
  if (rho !== 0) {
    const rr = t.rootPerRho;
    v00 += rho * rr[i00]!;
    v01 += rho * rr[i00 + 1]!;
    v10 += rho * rr[i10]!;
    v11 += rho * rr[i10 + 1]!;
  }
  const d0 = v01 - v00;
  const d1 = v11 - v10;
  const a0 = v00 + d0 * c.tu;
  const a1 = v10 + d1 * c.tu;
  out.root = a0 + (a1 - a0) * pl.ts;
  out.slope = (d0 + (d1 - d0) * pl.ts) * c.inverseDu;
}

const rootScratch = workspace.bridge.root;
const rootScratch2 = workspace.bridge.root2;

/** Mean output (units of E/X) and its slope in u at u, with the rest placed by `pl`. */
function meanAt(t: BridgeTable, u: number, pl: Placement, out: TableLookup): TableLookup {
  const uNodes = t.u.nodes;
  if (u >= uNodes[uNodes.length - 1]!) {
    out.mean = 0;
    out.dMeanDu = 0;
    return out;
  }
  const c = column(t.u, u, columnScratch);
  const layer = t.s.nodes.length * uNodes.length;
  const a = rootScratch;
  rootInLayer(t, pl.li * layer, c, pl, a);
  let root = a.root;
  let slope = a.slope;
  if (t.dropLevels.length > 1) {
    const z = rootScratch2;
    rootInLayer(t, (pl.li + 1) * layer, c, pl, z);
    root += (z.root - root) * pl.tl;
    slope += (z.slope - slope) * pl.tl;
  }
  if (root > 0) {
    out.mean = root * root;
    out.dMeanDu = u < 0 ? 0 : 2 * root * slope;
  } else {
    out.mean = 0;
    out.dMeanDu = 0;
  }
  return out;
}

/** Bilinear value of a per-node array in one layer. */
function nodeValue(values: Float64Array, uPoints: number, layerOffset: number, c: Column, pl: Placement): number {
  const i00 = layerOffset + pl.is * uPoints + c.iu;
  const i10 = i00 + uPoints;
  const b0 = values[i00]! + (values[i00 + 1]! - values[i00]!) * c.tu;
  const b1 = values[i10]! + (values[i10 + 1]! - values[i10]!) * c.tu;
  return b0 + (b1 - b0) * pl.ts;
}

/** AC rms, dominant harmonic and phase squares at u (asked once per operating point). */
function extrasAt(t: BridgeTable, u: number, pl: Placement, out: TableLookup): TableLookup {
  const uNodes = t.u.nodes;
  const uPoints = uNodes.length;
  if (u >= uNodes[uPoints - 1]!) {
    out.acRms = 0;
    out.dominant = 6;
    out.phaseSquares = 0;
    out.dcVector = 0;
    return out;
  }
  const c = column(t.u, u, columnScratch);
  const layer = t.s.nodes.length * uPoints;
  const lo = pl.li * layer;
  out.acRms = nodeValue(t.acRms, uPoints, lo, c, pl);
  out.phaseSquares = nodeValue(t.phaseSquares, uPoints, lo, c, pl);
  out.dcVector = nodeValue(t.dcVector, uPoints, lo, c, pl);
  const near = (pl.ts < 0.5 ? pl.is : pl.is + 1) * uPoints + c.iu + (c.tu < 0.5 ? 0 : 1);
  out.dominant = t.dominant[lo + near]!;
  if (t.dropLevels.length > 1) {
    const hi = (pl.li + 1) * layer;
    out.acRms += (nodeValue(t.acRms, uPoints, hi, c, pl) - out.acRms) * pl.tl;
    out.phaseSquares += (nodeValue(t.phaseSquares, uPoints, hi, c, pl) - out.phaseSquares) * pl.tl;
    out.dcVector += (nodeValue(t.dcVector, uPoints, hi, c, pl) - out.dcVector) * pl.tl;
    if (pl.tl >= 0.5) out.dominant = t.dominant[hi + near]!;
  }
  if (out.acRms < 0) out.acRms = 0;
  return out;
}

const placeScratch = workspace.bridge.place;

/**
 * Lookup at (u, r): u in the table's own coordinate ('output': (V + 2 V_f)/E;
 * 'natural': (V + 2 V_f)/E - phi), r = R/X, phi = V_f / E (natural tables
 * only), b = n Vt / E and rho = R_dc / X (first-order terms, 0 leaves them
 * out). Clamps outside the grid in r and phi; past the u axis the output is zero.
 */
export function lookupTable(t: BridgeTable, u: number, r: number, out: TableLookup, phi = 0, b = 0, rho = 0): TableLookup {
  const pl = place(t, r, phi, b, rho, placeScratch);
  meanAt(t, u, pl, out);
  return extrasAt(t, u, pl, out);
}

// ---- One operating point against a DC Thevenin source ---------------------

export interface DiodeShockley {
  saturationCurrentA: number;
  emissionCoefficient: number;
}

/** Thermal voltage at 27 C, as SPICE uses by default. */
export const THERMAL_VOLTAGE_V = 0.025852;

/** Forward drop of a diode carrying `currentA` (without its bulk resistance). */
export function diodeDropV(d: DiodeShockley, currentA: number): number {
  const i = currentA > 0 ? currentA : 0;
  return d.emissionCoefficient * THERMAL_VOLTAGE_V * detLog1p(i / d.saturationCurrentA);
}

export interface BridgePointInput {
  table: BridgeTable;
  emfPeakV: number;
  /** omega * L. */
  reactanceOhm: number;
  phaseResistanceOhm: number;
  diode: DiodeShockley;
  /** DC side from the bridge's terminals: V = thevenin + R * I. */
  dcTheveninV: number;
  dcResistanceOhm: number;
  /** Starting guess (the previous step's current). */
  guessA: number;
}

export interface BridgePoint {
  meanA: number;
  acRmsA: number;
  dominantHarmonic: number;
  /** Bridge DC voltage (B+ to case) at this current. */
  dcV: number;
  /** Sum over the three stator phases of the rms current squared (A^2): the copper loss is this times R. */
  phaseSquaresA2: number;
  /** The standing DC part of the phase currents as a stator space vector (A; 0 for a healthy bridge). */
  statorDcA: number;
}

const scratch = workspace.bridge.lookup;
const pointPlace = workspace.bridge.pointPlace;

/**
 * The diode drop at the last current asked. Each step's solve starts from
 * the current the previous step's ended on, where that solve's last
 * iteration already took the drop: remembering it (keyed on all three
 * inputs) spares a logarithm per step and gives the very same value.
 */
const { dropMemo } = workspace.bridge;

function diodeDropAt(currentA: number, saturationCurrentA: number, nvt: number): number {
  const memo = dropMemo;
  if (memo.currentA === currentA && memo.saturationCurrentA === saturationCurrentA && memo.nvt === nvt) return memo.dropV;
  const v = nvt * detLog1p(currentA / saturationCurrentA);
  memo.currentA = currentA;
  memo.saturationCurrentA = saturationCurrentA;
  memo.nvt = nvt;
  memo.dropV = v;
  return v;
}

/**
 * Mean bridge output against the DC side: solves
 * I = (E/X) g(u(I), R/X) by safeguarded Newton, where u(I) carries the DC
 * side's voltage at I and the diode drops ('output' tables: at I itself;
 * 'natural' tables: at E/X, fixed for the step).
 */
export function bridgeOperatingPoint(inp: BridgePointInput, out: BridgePoint): BridgePoint {
  const e = inp.emfPeakV;
  const x = inp.reactanceOhm;
  out.meanA = 0;
  out.acRmsA = 0;
  out.dominantHarmonic = 6;
  out.dcV = inp.dcTheveninV;
  out.phaseSquaresA2 = 0;
  out.statorDcA = 0;
  if (!(e > 1e-6) || !(x > 1e-9)) return out;
  const base = e / x;
  const r = inp.phaseResistanceOhm / x;
  const nvt = inp.diode.emissionCoefficient * THERMAL_VOLTAGE_V;
  const is = inp.diode.saturationCurrentA;
  const vth = inp.dcTheveninV;
  const rth = inp.dcResistanceOhm;
  const table = inp.table;
  const natural = table.dropReference === 'natural';
  // The drop at E/X for a 'natural' table, fixed for the whole solve.
  const vfNatural = natural ? nvt * detLog1p(base / is) : 0;
  const phi = vfNatural / e;
  // r, phi, b and rho are the same for every lookup below: place them once.
  const pl = place(table, r, phi, nvt / e, rth / x, pointPlace);
  // Bracket [lo, hi] with F(lo) <= 0 <= F(hi), F(I) = I - base * g(u(I)).
  let lo = 0;
  const f0 = meanAt(table, natural ? (vth + vfNatural) / e : vth / e, pl, scratch).mean;
  if (f0 <= 0) return out;
  let hi = base * (natural ? Math.max(f0, table.maxMean) : f0);
  let i = inp.guessA > lo && inp.guessA < hi ? inp.guessA : 0.5 * hi;
  for (let iter = 0; iter < 30; iter++) {
    let u: number;
    let dudi: number;
    if (natural) {
      u = (vth + rth * i + vfNatural) / e;
      dudi = rth / e;
    } else {
      const vf = diodeDropAt(i, is, nvt);
      u = (vth + rth * i + 2 * vf) / e;
      dudi = (rth + (2 * nvt) / (i + is)) / e;
    }
    const lk = meanAt(table, u, pl, scratch);
    const f = i - base * lk.mean;
    if (f > 0) hi = i;
    else lo = i;
    if (Math.abs(f) < 1e-7 * (1 + hi) || hi - lo < 1e-9 * (1 + hi)) break;
    const df = 1 - base * lk.dMeanDu * dudi;
    let nextI = i - f / df;
    if (!(nextI > lo && nextI < hi)) nextI = 0.5 * (lo + hi);
    i = nextI;
  }
  const uEnd = natural ? (vth + rth * i + vfNatural) / e : (vth + rth * i + 2 * diodeDropAt(i, is, nvt)) / e;
  extrasAt(table, uEnd, pl, scratch);
  out.meanA = i;
  out.acRmsA = base * scratch.acRms;
  out.dominantHarmonic = scratch.dominant;
  out.dcV = vth + rth * i;
  out.phaseSquaresA2 = base * base * scratch.phaseSquares;
  out.statorDcA = scratch.dcVector > 0 ? base * scratch.dcVector : 0;
  return out;
}

/** The topologies the fault catalog produces (diode 0 open or shorted, phase A open) and the healthy one. */
export const CATALOG_TOPOLOGIES: readonly BridgeTopology[] = [
  { openDiodes: [], shortedDiodes: [], openPhases: [] },
  { openDiodes: [0], shortedDiodes: [], openPhases: [] },
  { openDiodes: [], shortedDiodes: [0], openPhases: [] },
  { openDiodes: [], shortedDiodes: [], openPhases: [0] },
];

/**
 * Build the cached characteristics ahead of need (each takes a few hundred
 * milliseconds once per process): call it while the bench loads or the server
 * boots so that a live fault injection does not stall a frame.
 */
export function prepareBridgeTables(topologies: readonly BridgeTopology[] = CATALOG_TOPOLOGIES): void {
  for (const t of topologies) bridgeTable(t);
}

// ---- Ripple with no load -----------------------------------------------------

const { openRippleRatios } = workspace.cache;

/**
 * AC rms of the bridge's output voltage with no load, per volt of phase EMF
 * peak: the envelope of the line-to-line voltages its working diodes can
 * pass (six pulses a cycle when healthy: 4.2 % of the mean, trade-facts
 * check value 3). This is the ripple a voltmeter finds at a B+ stud cut off
 * from the battery, where nothing smooths it (an open fusible link or
 * charging lead: about 2 V or more at idle, OEM Mitsubishi).
 */
export function openCircuitRippleRatio(topology: BridgeTopology): number {
  const key = topologyKey(topology);
  const known = openRippleRatios.get(key);
  if (known !== undefined) return known;
  const m = masksOf(topology);
  const n = 720;
  const sines = sineTable(n);
  const v = new Float64Array(n);
  let sum = 0;
  for (let s = 0; s < n; s++) {
    let top = -Infinity;
    let bottom = Infinity;
    for (let k = 0; k < 3; k++) {
      if (m.phaseOpen[k]) continue;
      const e = sines[k * (n + 1) + s]!;
      if (m.topOk[k] || m.forcedTop[k]) top = Math.max(top, e);
      if (m.botOk[k] || m.forcedBot[k]) bottom = Math.min(bottom, e);
    }
    const x = top > bottom ? top - bottom : 0;
    v[s] = x;
    sum += x;
  }
  const mean = sum / n;
  let sq = 0;
  for (let s = 0; s < n; s++) sq += (v[s]! - mean) * (v[s]! - mean);
  const ratio = Math.sqrt(sq / n);
  openRippleRatios.set(key, ratio);
  return ratio;
}
