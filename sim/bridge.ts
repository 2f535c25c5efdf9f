/**
 * The three-phase stator and six-diode bridge in periodic steady state.
 *
 * Two levels, one core:
 *  - `periodicBridge` integrates one electrical cycle of the star-connected
 *    stator (EMF behind R and L per phase) feeding the bridge into a DC side
 *    of Thevenin voltage and resistance, with diodes as a forward drop, and
 *    finds the periodic solution by shooting (Newton on the start-of-cycle
 *    phase currents). It holds through heavy commutation overlap, which is
 *    where the alternator's output self-limits.
 *  - `bridgeTable` runs that core once per bridge topology over a grid of
 *    dimensionless operating points and caches the result; the step looks up
 *    the mean output there (bilinear) and solves one scalar equation.
 *
 * With a stiff DC side (a battery) the circuit reduces exactly to two
 * numbers: with currents in units of E/X and voltages in units of E
 * (E = phase EMF peak, X = omega L), the output depends only on
 * u = (V_dc + 2 V_f) / E and r = R_phase / X.
 *
 * Units in names: V, A, Ohm, H, rad/s; "n" prefixes dimensionless values.
 */

import { detCos, detLog1p, detSin } from './det-math.ts';

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
 * One cycle of backward-Euler integration from the given start currents.
 * Writes the output current per step into `out` (if given) and returns the
 * end-of-cycle phase currents A and B.
 */
function integrateCycle(
  inp: BridgeCycleInput,
  m: Masks,
  startA: number,
  startB: number,
  out: Float64Array | null,
): [number, number] {
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
        // No current flows: does any top/bottom pair see enough voltage to start?
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
            if (!canBot) continue;
            const cb = m.forcedBot[j] ? 0 : -vf;
            const margin = e[k]! - ct - (e[j]! - cb) - vth;
            if (margin > best) {
              best = margin;
              kt = k;
              kb = j;
            }
          }
        }
        if (best > 0 && (mode[kt] !== 1 || mode[kb] !== 2)) {
          for (let k = 0; k < 3; k++) if (!m.forcedTop[k] && !m.forcedBot[k]) mode[k] = 0;
          mode[kt] = 1;
          mode[kb] = 2;
          changed = true;
        }
      }
      if (!changed) break;
    }
    i[0] = next[0]!;
    i[1] = next[1]!;
    i[2] = next[2]!;
    if (out) out[s - 1] = sTop;
  }
  return [i[0]!, i[1]!];
}

const sineTables = new Map<number, Float64Array>();

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

const harmonicTables = new Map<number, { cos: Float64Array; sin: Float64Array }>();

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

/**
 * Periodic steady state of the bridge: Newton on the start-of-cycle phase
 * currents so that one cycle returns to them. `guess` speeds it up.
 */
export function periodicBridge(inp: BridgeCycleInput, guess?: [number, number]): BridgeCycleResult {
  const m = masksOf(inp.topology);
  const scale = Math.max(1e-6, inp.emfPeakV / Math.max(1e-9, inp.omegaRadS * inp.inductanceH + inp.phaseResistanceOhm));
  let x0 = guess ? guess[0] : 0;
  let x1 = guess ? guess[1] : 0;
  const waveform = new Float64Array(inp.stepsPerCycle);
  const tol = 1e-6 * scale;
  let phi = integrateCycle(inp, m, x0, x1, waveform);
  let resid = Math.abs(phi[0] - x0) + Math.abs(phi[1] - x1);
  for (let iter = 0; iter < 12 && resid >= tol; iter++) {
    const r0 = phi[0] - x0;
    const r1 = phi[1] - x1;
    const dx = 1e-4 * scale;
    const pa = integrateCycle(inp, m, x0 + dx, x1, null);
    const pb = integrateCycle(inp, m, x0, x1 + dx, null);
    // Jacobian of (phi - x).
    const j00 = (pa[0] - phi[0]) / dx - 1;
    const j10 = (pa[1] - phi[1]) / dx;
    const j01 = (pb[0] - phi[0]) / dx;
    const j11 = (pb[1] - phi[1]) / dx - 1;
    const det = j00 * j11 - j01 * j10;
    let d0 = phi[0] - x0;
    let d1 = phi[1] - x1;
    if (Number.isFinite(det) && Math.abs(det) > 1e-12) {
      d0 = -(r0 * j11 - r1 * j01) / det;
      d1 = -(j00 * r1 - j10 * r0) / det;
    }
    // Damp steps larger than the natural current scale (the map is only piecewise linear).
    const size = Math.abs(d0) + Math.abs(d1);
    const limit = 0.5 * scale;
    const k = size > limit ? limit / size : 1;
    const nx0 = x0 + k * d0;
    const nx1 = x1 + k * d1;
    const nphi = integrateCycle(inp, m, nx0, nx1, waveform);
    const nresid = Math.abs(nphi[0] - nx0) + Math.abs(nphi[1] - nx1);
    if (nresid > resid) break;
    x0 = nx0;
    x1 = nx1;
    phi = nphi;
    resid = nresid;
  }
  // Newton stalled (a mode change near the solution): iterate the cycle map itself.
  for (let cycle = 0; cycle < 4000 && resid >= tol; cycle++) {
    x0 = phi[0];
    x1 = phi[1];
    phi = integrateCycle(inp, m, x0, x1, waveform);
    resid = Math.abs(phi[0] - x0) + Math.abs(phi[1] - x1);
  }
  const stats = cycleStats(waveform);
  return { ...stats, waveformA: waveform, startA: [x0, x1] };
}

// ---- The cached characteristic -------------------------------------------

/** u = (V_dc + 2 V_f) / E from 0 to U_MAX (conduction ends at sqrt(3)). */
const U_MAX = 1.8;
const U_POINTS = 37;
/** s = sqrt(r), r = R_phase / X. */
const S_MIN = 0.2;
const S_MAX = 1.8;
const S_POINTS = 17;
const TABLE_STEPS_PER_CYCLE = 360;

export interface BridgeTable {
  /**
   * Diode drop over EMF (phi = V_f / E) at which layers were computed. A
   * constant drop folds exactly into u for a bridge of working or open
   * diodes (one layer); a shorted diode has no drop, so its phase sits V_f
   * apart from the others and phi becomes a third coordinate.
   */
  dropLevels: readonly number[];
  /** Mean output in units of E/X, [phi][s][u]. */
  mean: Float64Array;
  /** AC rms of the output in units of E/X. */
  acRms: Float64Array;
  dominant: Uint8Array;
}

const SHORTED_DROP_LEVELS = [0, 0.06, 0.12] as const;
/** Values in one drop layer of a table. */
const LAYER = S_POINTS * U_POINTS;

const tables = new Map<string, BridgeTable>();

export function topologyKey(t: BridgeTopology): string {
  const norm = (l: readonly number[]) => [...new Set(l)].sort((a, b) => a - b).join(',');
  return `o${norm(t.openDiodes)}|s${norm(t.shortedDiodes)}|p${norm(t.openPhases)}`;
}

function buildTable(topology: BridgeTopology): BridgeTable {
  const dropLevels: readonly number[] = topology.shortedDiodes.length > 0 ? SHORTED_DROP_LEVELS : [0];
  const mean = new Float64Array(dropLevels.length * LAYER);
  const acRms = new Float64Array(dropLevels.length * LAYER);
  const dominant = new Uint8Array(dropLevels.length * LAYER);
  dropLevels.forEach((phi, li) => {
    for (let si = 0; si < S_POINTS; si++) {
      const s = S_MIN + ((S_MAX - S_MIN) * si) / (S_POINTS - 1);
      const r = s * s;
      let guess: [number, number] | undefined;
      for (let ui = U_POINTS - 1; ui >= 0; ui--) {
        const u = (U_MAX * ui) / (U_POINTS - 1);
        const res = periodicBridge(
          {
            topology,
            emfPeakV: 1,
            omegaRadS: 1,
            inductanceH: 1,
            phaseResistanceOhm: r,
            diodeDropV: phi,
            dcTheveninV: u - 2 * phi,
            dcResistanceOhm: 0,
            stepsPerCycle: TABLE_STEPS_PER_CYCLE,
          },
          guess,
        );
        guess = res.startA;
        const idx = li * LAYER + si * U_POINTS + ui;
        mean[idx] = Math.max(0, res.meanA);
        acRms[idx] = res.acRmsA;
        dominant[idx] = res.dominantHarmonic;
      }
      // The output never rises with u; remove integration noise that would say otherwise.
      for (let ui = U_POINTS - 2; ui >= 0; ui--) {
        const idx = li * LAYER + si * U_POINTS + ui;
        if (mean[idx]! < mean[idx + 1]!) mean[idx] = mean[idx + 1]!;
      }
    }
  });
  // Nor, with working or open diodes, with more resistance (s): with the grid
  // monotone in u and s, so is every interpolation, and the output curve
  // cannot fall as speed rises. (A shorted diode's circulating current is
  // damped by resistance, so there output may rise with r; left as computed.)
  const shorted = topology.shortedDiodes.length > 0;
  for (let li = 0; li < (shorted ? 0 : dropLevels.length); li++) {
    for (let si = 0; si < S_POINTS; si++) {
      for (let ui = 0; ui < U_POINTS; ui++) {
        const idx = li * LAYER + si * U_POINTS + ui;
        if (si > 0) mean[idx] = Math.min(mean[idx]!, mean[idx - U_POINTS]!);
      }
    }
  }
  return { dropLevels, mean, acRms, dominant };
}

/** The cached characteristic of a topology (built on first use, about 0.1 s). */
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
}

/**
 * Where sqrt(r) falls on the grid's s axis: the row below it and the weight
 * toward the next. The bridge's operating point asks many u at one r, so it
 * places r once (see bridgeOperatingPoint).
 */
interface RowPosition {
  is: number;
  ts: number;
}

function placeRow(r: number, out: RowPosition): RowPosition {
  let s = Math.sqrt(r > 0 ? r : 0);
  if (s < S_MIN) s = S_MIN;
  else if (s > S_MAX) s = S_MAX;
  const fs = ((s - S_MIN) / (S_MAX - S_MIN)) * (S_POINTS - 1);
  let is = Math.floor(fs);
  if (is > S_POINTS - 2) is = S_POINTS - 2;
  out.is = is;
  out.ts = fs - is;
  return out;
}

/** Bilinear lookup in one drop layer, at column iu (weight tu) and row is (weight ts). */
function lookupLayer(t: BridgeTable, layer: number, iu: number, tu: number, is: number, ts: number, out: TableLookup): TableLookup {
  const i00 = layer * LAYER + is * U_POINTS + iu;
  const i10 = i00 + U_POINTS;
  const m = t.mean;
  const d0 = m[i00 + 1]! - m[i00]!;
  const d1 = m[i10 + 1]! - m[i10]!;
  const a0 = m[i00]! + d0 * tu;
  const a1 = m[i10]! + d1 * tu;
  out.mean = a0 + (a1 - a0) * ts;
  out.dMeanDu = ((d0 + (d1 - d0) * ts) * (U_POINTS - 1)) / U_MAX;
  const q = t.acRms;
  const b0 = q[i00]! + (q[i00 + 1]! - q[i00]!) * tu;
  const b1 = q[i10]! + (q[i10 + 1]! - q[i10]!) * tu;
  out.acRms = b0 + (b1 - b0) * ts;
  const nearest = (ts < 0.5 ? i00 : i10) + (tu < 0.5 ? 0 : 1);
  out.dominant = t.dominant[nearest]!;
  return out;
}

const layerScratch: TableLookup = { mean: 0, dMeanDu: 0, acRms: 0, dominant: 6 };

/** The lookup at u and phi with sqrt(r) already placed on the grid (see lookupTable). */
function lookupPlaced(t: BridgeTable, u: number, row: RowPosition, phi: number, out: TableLookup): TableLookup {
  if (u >= U_MAX) {
    out.mean = 0;
    out.dMeanDu = 0;
    out.acRms = 0;
    out.dominant = 6;
    return out;
  }
  const uu = u < 0 ? 0 : u;
  const fu = (uu / U_MAX) * (U_POINTS - 1);
  let iu = Math.floor(fu);
  if (iu > U_POINTS - 2) iu = U_POINTS - 2;
  const tu = fu - iu;
  const levels = t.dropLevels;
  if (levels.length === 1) return lookupLayer(t, 0, iu, tu, row.is, row.ts, out);
  const top = levels.length - 1;
  const span = levels[top]! / top;
  let f = (phi > 0 ? phi : 0) / span;
  if (f > top) f = top;
  let li = Math.floor(f);
  if (li > top - 1) li = top - 1;
  const w = f - li;
  lookupLayer(t, li, iu, tu, row.is, row.ts, out);
  const lo = layerScratch;
  lookupLayer(t, li + 1, iu, tu, row.is, row.ts, lo);
  out.mean += (lo.mean - out.mean) * w;
  out.dMeanDu += (lo.dMeanDu - out.dMeanDu) * w;
  out.acRms += (lo.acRms - out.acRms) * w;
  if (w >= 0.5) out.dominant = lo.dominant;
  return out;
}

const rowScratch: RowPosition = { is: 0, ts: 0 };

/**
 * Lookup at (u, r, phi): bilinear in u and sqrt(r), linear between drop
 * layers; clamps outside the grid (above U_MAX the output is zero).
 */
export function lookupTable(t: BridgeTable, u: number, r: number, out: TableLookup, phi = 0): TableLookup {
  return lookupPlaced(t, u, placeRow(r, rowScratch), phi, out);
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
}

const scratch: TableLookup = { mean: 0, dMeanDu: 0, acRms: 0, dominant: 6 };
const pointRow: RowPosition = { is: 0, ts: 0 };

/**
 * The diode drop at the last current asked. Each step's solve starts from
 * the current the previous step's ended on, where that solve's last
 * iteration already took the drop: remembering it (keyed on all three
 * inputs) spares a logarithm per step and gives the very same value.
 */
const dropMemo = { currentA: NaN, saturationCurrentA: NaN, nvt: NaN, dropV: 0 };

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
 * Mean bridge output against a stiff DC side: solves
 * I = (E/X) g((V_th + R_th I + 2 V_f(I)) / E, R/X) by safeguarded Newton.
 */
export function bridgeOperatingPoint(inp: BridgePointInput, out: BridgePoint): BridgePoint {
  const e = inp.emfPeakV;
  const x = inp.reactanceOhm;
  out.meanA = 0;
  out.acRmsA = 0;
  out.dominantHarmonic = 6;
  out.dcV = inp.dcTheveninV;
  if (!(e > 1e-6) || !(x > 1e-9)) return out;
  const base = e / x;
  const r = inp.phaseResistanceOhm / x;
  const nvt = inp.diode.emissionCoefficient * THERMAL_VOLTAGE_V;
  const is = inp.diode.saturationCurrentA;
  const vth = inp.dcTheveninV;
  const rth = inp.dcResistanceOhm;
  const table = inp.table;
  // r is the same for every lookup below: place it on the grid once.
  const row = placeRow(r, pointRow);
  // Bracket [lo, hi] with F(lo) <= 0 <= F(hi), F(I) = I - base * g(u(I)).
  let lo = 0;
  const f0 = lookupPlaced(table, vth / e, row, 0, scratch).mean;
  if (f0 <= 0) return out;
  let hi = base * f0;
  let i = inp.guessA > lo && inp.guessA < hi ? inp.guessA : 0.5 * hi;
  // Whether `scratch` holds the lookup at the final i (the loop stopped on convergence).
  let lookedUpAtI = false;
  for (let iter = 0; iter < 30; iter++) {
    const vf = diodeDropAt(i, is, nvt);
    const lk = lookupPlaced(table, (vth + rth * i + 2 * vf) / e, row, vf / e, scratch);
    const f = i - base * lk.mean;
    if (f > 0) hi = i;
    else lo = i;
    if (Math.abs(f) < 1e-7 * (1 + hi) || hi - lo < 1e-9 * (1 + hi)) {
      lookedUpAtI = true;
      break;
    }
    const dudi = (rth + nvt / (i + is)) / e;
    const df = 1 - base * lk.dMeanDu * dudi;
    let nextI = i - f / df;
    if (!(nextI > lo && nextI < hi)) nextI = 0.5 * (lo + hi);
    i = nextI;
  }
  if (!lookedUpAtI) {
    const vfEnd = diodeDropAt(i, is, nvt);
    lookupPlaced(table, (vth + rth * i + 2 * vfEnd) / e, row, vfEnd / e, scratch);
  }
  out.meanA = i;
  out.acRmsA = base * scratch.acRms;
  out.dominantHarmonic = scratch.dominant;
  out.dcV = vth + rth * i;
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

const openRippleRatios = new Map<string, number>();

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
