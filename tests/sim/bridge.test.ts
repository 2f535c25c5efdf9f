/**
 * The stator and bridge core against closed forms of the three-phase
 * six-diode bridge, and the cached characteristic against the core it was
 * built from.
 */
import { describe, expect, it } from 'vitest';
import type { RectifierCircuit } from '../../sim/circuit';
import { solveRectifier } from '../../sim/rectifier';
import { bridgeTable, lookupTable, periodicBridge } from '../../sim/bridge';

const HEALTHY = { openDiodes: [], shortedDiodes: [], openPhases: [] };
const LINE_TO_LINE_RMS_V = 100;

// A resistive load, no battery, no inductance, near-ideal diodes: the textbook bench.
const IDEAL_BENCH: RectifierCircuit = {
  electricalHz: 560,
  phaseEmfPeakV: (LINE_TO_LINE_RMS_V * Math.SQRT2) / Math.sqrt(3),
  statorResistanceOhm: 0.01,
  synchronousInductanceH: 0,
  diode: { saturationCurrentA: 1e-12, emissionCoefficient: 0.05, seriesResistanceOhm: 0 },
  openDiodes: [],
  shortedDiodes: [],
  openPhases: [],
  battery: null,
  bplusResistanceOhm: 0,
  groundResistanceOhm: 0,
  loadResistanceOhm: 100,
};

describe('the six-diode bridge on an ideal resistive bench', () => {
  const healthy = solveRectifier(IDEAL_BENCH);

  it('gives a mean DC voltage of 1.3505 times the line-to-line rms within 0.5 %', () => {
    // CRC Electric Power Engineering Handbook §22.2.5 eq. 22.4; MathWorks Simscape Average-Value Rectifier.
    expect(healthy.meanBatteryV / LINE_TO_LINE_RMS_V).toBeGreaterThan(1.3505 * 0.995);
    expect(healthy.meanBatteryV / LINE_TO_LINE_RMS_V).toBeLessThan(1.3505 * 1.005);
  });

  it('has an AC ripple of 4.2 % of the DC within half a point, at six times the electrical frequency', () => {
    // electricalexams.co (V_pp = V_m(1 - cos 30°)); PE exam notes (poweredge): ripple factor 4.2 %; Hart: 6 pulses.
    const pct = (100 * healthy.rippleRmsV) / healthy.meanBatteryV;
    expect(pct).toBeGreaterThan(3.7);
    expect(pct).toBeLessThan(4.7);
    expect(healthy.dominantRippleHz).toBeCloseTo(6 * 560, 6);
  });

  it('with one open diode falls to 83 ± 2 % of healthy and ripples at the electrical frequency', () => {
    // Derived in trade-facts (numerical integration): 5/6 of healthy, largest ripple component at f.
    const open = solveRectifier({ ...IDEAL_BENCH, openDiodes: [0] });
    const ratio = open.meanBatteryV / healthy.meanBatteryV;
    expect(ratio).toBeGreaterThan(0.81);
    expect(ratio).toBeLessThan(0.85);
    expect(open.dominantRippleHz).toBeCloseTo(560, 6);
  });

  it('with one phase open falls to 0.900 / 1.3505 of healthy and ripples at twice the electrical frequency', () => {
    // Derived in trade-facts (numerical integration): V_avg = 0.900 V_LL,rms, ripple at 2f.
    const open = solveRectifier({ ...IDEAL_BENCH, openPhases: [0] });
    expect(open.meanBatteryV / LINE_TO_LINE_RMS_V).toBeGreaterThan(0.9 * 0.98);
    expect(open.meanBatteryV / LINE_TO_LINE_RMS_V).toBeLessThan(0.9 * 1.02);
    expect(open.dominantRippleHz).toBeCloseTo(2 * 560, 6);
  });
});

describe('the bridge against a stiff DC source (per-unit: E = 1, X = 1)', () => {
  const cycle = (u: number, r: number, steps = 2880) =>
    periodicBridge({
      topology: HEALTHY,
      emfPeakV: 1,
      omegaRadS: 1,
      inductanceH: 1,
      phaseResistanceOhm: r,
      diodeDropV: 0,
      dcTheveninV: u,
      dcResistanceOhm: 0,
      stepsPerCycle: steps,
    });

  it('into a short circuit delivers 3/π of E/X, the rectified short-circuit current that caps output at speed', () => {
    // Closed form: phase currents become sinusoids of peak E/X; the DC side carries (1/2)·Σ|i| = 3/π on average (machine theory).
    expect(cycle(0, 0.04).meanA).toBeCloseTo(3 / Math.PI, 2);
  });

  it('delivers nothing once the DC voltage reaches the line-to-line EMF peak (√3 E)', () => {
    // Conduction needs e_k - e_j > V_dc; max(e_k - e_j) = √3 E (common practice, no source).
    expect(cycle(Math.sqrt(3) + 0.01, 0.2).meanA).toBe(0);
  });

  it('matches its cached characteristic within 1 % across the operating range', () => {
    // Self-consistency of the model's two levels (no external source).
    const table = bridgeTable(HEALTHY);
    const out = { mean: 0, dMeanDu: 0, acRms: 0, dominant: 0, phaseSquares: 0, dcVector: 0 };
    for (const [u, r] of [
      [0.3, 0.08],
      [0.75, 0.2],
      [1.17, 0.31],
      [1.4, 0.6],
      [0.5, 1.0],
    ] as const) {
      const direct = cycle(u, r).meanA;
      const cached = lookupTable(table, u, r, out).mean;
      expect(Math.abs(cached - direct)).toBeLessThan(0.01 * Math.max(direct, 0.1));
    }
  });

  it('never gives more output at a higher DC voltage or a higher resistance', () => {
    // Physical monotonicity (common practice, no source).
    const table = bridgeTable(HEALTHY);
    const out = { mean: 0, dMeanDu: 0, acRms: 0, dominant: 0, phaseSquares: 0, dcVector: 0 };
    for (let r = 0.04; r < 3; r *= 1.3) {
      let last = Infinity;
      for (let u = 0; u < 1.8; u += 0.013) {
        const g = lookupTable(table, u, r, out).mean;
        expect(g).toBeLessThanOrEqual(last + 1e-12);
        last = g;
      }
    }
  });
});
