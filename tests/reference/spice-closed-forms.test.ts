/**
 * The SPICE harness itself, checked against published closed forms for the
 * three-phase six-diode bridge before it is trusted as a reference for the model.
 *
 * "Ideal" bench: a resistive load with no battery, no inductance and near-ideal
 * diodes. An emission coefficient of 0.05 gives a forward drop of about 36 mV at
 * the bench current, and the stator resistance drops about 27 mV, together
 * under 0.1 % of the 135 V output, so the closed forms apply within their bands.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import type { RectifierCircuit } from '../../sim/circuit';
import { netlistFor, spiceRun, warmUpSpice } from './spice-harness';
import type { SpiceRun } from './spice-harness';

// About 10 s of CPU; the margin is for a machine shared with other work.
const SETUP_TIMEOUT_MS = 120_000;

const LINE_TO_LINE_RMS_V = 100;
const LINE_TO_LINE_PEAK_V = LINE_TO_LINE_RMS_V * Math.SQRT2;
const PHASE_PEAK_V = LINE_TO_LINE_PEAK_V / Math.sqrt(3);

// 6 pole pairs at 5,600 alternator rpm (2,000 engine rpm on a 2.8:1 pulley).
const POLE_PAIRS = 6;
const ENGINE_RPM = 2000;
const PULLEY_RATIO = 2.8;
const ALTERNATOR_RPM = ENGINE_RPM * PULLEY_RATIO;
const ELECTRICAL_HZ = (POLE_PAIRS * ALTERNATOR_RPM) / 60;

const IDEAL_BENCH: RectifierCircuit = {
  electricalHz: ELECTRICAL_HZ,
  phaseEmfPeakV: PHASE_PEAK_V,
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

function peakToPeakV(run: SpiceRun): number {
  return Math.max(...run.batteryPostV) - Math.min(...run.batteryPostV);
}

let healthy: SpiceRun;
let oneDiodeOpen: SpiceRun;

beforeAll(async () => {
  await warmUpSpice();
  healthy = await spiceRun(IDEAL_BENCH);
  oneDiodeOpen = await spiceRun({ ...IDEAL_BENCH, openDiodes: [0] });
}, SETUP_TIMEOUT_MS);

describe('netlist', () => {
  it('has three phase sources 120 degrees apart, six diodes and the diode model of the circuit', () => {
    const net = netlistFor(IDEAL_BENCH);
    expect(net).toMatch(/^vemf_a e_a st SIN\(0 \S+ 560\.0+ 0 0 0\)$/m);
    expect(net).toMatch(/^vemf_b e_b st SIN\(0 \S+ 560\.0+ 0 0 -120\)$/m);
    expect(net).toMatch(/^vemf_c e_c st SIN\(0 \S+ 560\.0+ 0 0 -240\)$/m);
    expect(net.match(/^d\d /gm)).toHaveLength(6);
    const model = /^\.model drect D\(IS=(\S+) N=(\S+) RS=(\S+)\)$/m.exec(net);
    expect(model?.slice(1).map(Number)).toEqual([1e-12, 0.05, 0]);
    expect(net).toMatch(/^\.tran /m);
  });

  it('omits an open diode, turns a shorted one into a resistor and breaks an open phase', () => {
    const net = netlistFor({ ...IDEAL_BENCH, openDiodes: [1], shortedDiodes: [3], openPhases: [2] });
    expect(net).not.toMatch(/^d1 /m);
    expect(net).toMatch(/^rshort3 cs p_a /m);
    expect(net).not.toMatch(/^vemf_c /m);
    expect(net).not.toMatch(/^rs_c /m);
  });
});

describe('six-diode bridge against closed forms', () => {
  it('gives V_dc = 1.3505 V_LL,rms within 0.5 %', () => {
    // CRC Electric Power Engineering Handbook, section 22.2.5 eq. 22.4: V_dc = (3 sqrt2 / pi) V_LL,rms; Hart, Power Electronics (0.955 V_m,LL).
    expect(healthy.solution.meanBatteryV / LINE_TO_LINE_RMS_V).toBeGreaterThan(1.3505 * 0.995);
    expect(healthy.solution.meanBatteryV / LINE_TO_LINE_RMS_V).toBeLessThan(1.3505 * 1.005);
  });

  it('loses about two diode drops: 11 V_LL,rms with two 0.9 V drops gives 13.06 V', async () => {
    // CRC Electric Power Engineering Handbook, section 22.2.5 (1.3505 V_LL,rms); MathWorks Reduced Lundell Alternator (v_s = ... - 2 V_d).
    const lineRmsV = 11;
    const loadOhm = 100;
    const expectedV = 1.3505 * lineRmsV - 2 * 0.9;
    // Saturation current chosen so one diode drops 0.9 V at the bench current (27 degC thermal voltage).
    const thermalV = (1.380649e-23 * 300.15) / 1.602176634e-19;
    const saturationCurrentA = (expectedV / loadOhm) * Math.exp(-0.9 / thermalV);
    const run = await spiceRun({
      ...IDEAL_BENCH,
      phaseEmfPeakV: (lineRmsV * Math.SQRT2) / Math.sqrt(3),
      diode: { saturationCurrentA, emissionCoefficient: 1, seriesResistanceOhm: 0 },
      loadResistanceOhm: loadOhm,
    });
    expect(expectedV).toBeCloseTo(13.06, 1);
    expect(Math.abs(run.solution.meanBatteryV - expectedV)).toBeLessThan(0.005 * expectedV);
    expect(1.3505 * lineRmsV - run.solution.meanBatteryV).toBeGreaterThan(1.75);
    expect(1.3505 * lineRmsV - run.solution.meanBatteryV).toBeLessThan(1.85);
  });

  it('has ripple p-p of 13.4 % of V_LL,pk and AC rms of 4.2 % of DC, within 0.5 points', () => {
    // electricalexams.co: V_pp = V_m,LL (1 - cos 30 deg) = 0.134 V_m,LL; PE exam notes (poweredge): ripple factor 4.2 %.
    const ppPercent = (100 * peakToPeakV(healthy)) / LINE_TO_LINE_PEAK_V;
    const acPercent = (100 * healthy.solution.rippleRmsV) / healthy.solution.meanBatteryV;
    expect(Math.abs(ppPercent - 13.4)).toBeLessThan(0.5);
    expect(Math.abs(acPercent - 4.2)).toBeLessThan(0.5);
  });

  it('ripples at 6f, with output harmonics only at multiples of 6f', () => {
    // D. Hart, Power Electronics (attribution from memory, per trade-facts section 2): 6 pulses per cycle, harmonics 6, 12, 18 x f.
    expect(healthy.solution.dominantRippleHz).toBe(6 * ELECTRICAL_HZ);
    const sixth = healthy.harmonicPeakV[6] ?? 0;
    healthy.harmonicPeakV.forEach((peakV, k) => {
      if (k > 0 && k % 6 !== 0) expect(peakV).toBeLessThan(0.01 * sixth);
    });
    expect(healthy.harmonicPeakV[12] ?? 0).toBeGreaterThan(0.1 * sixth);
  });

  it('with one diode open: V_avg 83 +/- 2 % of healthy, ripple at f, p-p = V_LL,pk, AC rms 34 % of DC', () => {
    // Derived in trade-facts section 2 by numerical integration (V_avg = 1.125 V_LL,rms = 5/6 of healthy); not a published figure.
    const ratio = oneDiodeOpen.solution.meanBatteryV / healthy.solution.meanBatteryV;
    expect(ratio).toBeGreaterThan(0.81);
    expect(ratio).toBeLessThan(0.85);
    expect(oneDiodeOpen.solution.meanBatteryV / LINE_TO_LINE_RMS_V).toBeCloseTo(1.125, 2);
    expect(oneDiodeOpen.solution.dominantRippleHz).toBe(ELECTRICAL_HZ);
    expect(peakToPeakV(oneDiodeOpen) / LINE_TO_LINE_PEAK_V).toBeCloseTo(1, 1);
    const acPercent = (100 * oneDiodeOpen.solution.rippleRmsV) / oneDiodeOpen.solution.meanBatteryV;
    expect(Math.abs(acPercent - 34)).toBeLessThan(1);
  });

  it('with any one of the six diodes open: the same drop and ripple at f', async () => {
    // Derived in trade-facts section 2 (numerical integration); the six positions are symmetric.
    for (const diode of [1, 2, 3, 4, 5]) {
      const run = await spiceRun({ ...IDEAL_BENCH, openDiodes: [diode] });
      expect(run.solution.meanBatteryV / healthy.solution.meanBatteryV).toBeCloseTo(
        oneDiodeOpen.solution.meanBatteryV / healthy.solution.meanBatteryV,
        3,
      );
      expect(run.solution.dominantRippleHz).toBe(ELECTRICAL_HZ);
    }
  });

  it('with one phase open: V_avg = 0.900 V_LL,rms and ripple at 2f', async () => {
    // Derived in trade-facts section 2 by numerical integration: single-phase full wave from the remaining line voltage.
    const run = await spiceRun({ ...IDEAL_BENCH, openPhases: [1] });
    expect(run.solution.meanBatteryV / LINE_TO_LINE_RMS_V).toBeGreaterThan(0.9 * 0.99);
    expect(run.solution.meanBatteryV / LINE_TO_LINE_RMS_V).toBeLessThan(0.9 * 1.01);
    expect(run.solution.dominantRippleHz).toBe(2 * ELECTRICAL_HZ);
  });
});

describe('frequency', () => {
  it('f = pole pairs x rpm / 60: 6 pole pairs at 5,600 alternator rpm give 560 Hz, ripple 3,360 Hz', () => {
    // US Navy NEETS, Generators and Motors: f = P N / 120 = p N / 60; trade-facts section 8 item 1 (ripple 6f, Hart).
    expect(ELECTRICAL_HZ).toBeCloseTo(560, 9);
    expect(healthy.solution.dominantRippleHz).toBe(3360);
    // The source frequency itself shows once one diode is open.
    expect(oneDiodeOpen.solution.dominantRippleHz).toBe(560);
  });

  it('follows speed: at 1,800 and 9,000 alternator rpm the ripple sits at 6 x p x rpm / 60', async () => {
    // US Navy NEETS, Generators and Motors (f = p N / 60); Hart (6 pulses per cycle).
    for (const rpm of [1800, 9000]) {
      const hz = (POLE_PAIRS * rpm) / 60;
      const run = await spiceRun({ ...IDEAL_BENCH, electricalHz: hz });
      expect(run.solution.dominantRippleHz).toBeCloseTo(6 * hz, 9);
      expect(run.solution.meanBatteryV / LINE_TO_LINE_RMS_V).toBeCloseTo(1.3505, 2);
    }
  });
});

describe('harness consistency with a battery and stator inductance', () => {
  const charging: RectifierCircuit = {
    electricalHz: ELECTRICAL_HZ,
    phaseEmfPeakV: 14,
    statorResistanceOhm: 0.04,
    synchronousInductanceH: 120e-6,
    diode: { saturationCurrentA: 1e-8, emissionCoefficient: 1.5, seriesResistanceOhm: 0.003 },
    openDiodes: [],
    shortedDiodes: [],
    openPhases: [],
    battery: { ocvV: 12.4, internalResistanceOhm: 0.01 },
    bplusResistanceOhm: 0.004,
    groundResistanceOhm: 0.003,
    loadResistanceOhm: 0.5,
  };

  it('with no EMF gives no output and no ripple', async () => {
    // Common practice, no source: a stopped alternator only leaks (the harness's junction gmin is 10 nS per diode).
    const s = (await spiceRun({ ...charging, phaseEmfPeakV: 0 })).solution;
    expect(Math.abs(s.meanOutputCurrentA)).toBeLessThan(1e-5);
    // Ohm's law: the battery alone feeds the load.
    expect(s.meanBatteryV).toBeCloseTo((12.4 * charging.loadResistanceOhm) / (charging.loadResistanceOhm + 0.01), 4);
    expect(s.rippleRmsV).toBeLessThan(1e-6);
    expect(s.dominantRippleHz).toBe(0);
  });

  it('balances current at the battery post and settles to a periodic state', async () => {
    // Kirchhoff's current law and Ohm's law (any circuits textbook): output = battery charge current + load current.
    const run = await spiceRun(charging);
    const s = run.solution;
    const battery = charging.battery;
    expect(battery).not.toBeNull();
    const batteryCurrentA = (s.meanBatteryV - (battery?.ocvV ?? 0)) / (battery?.internalResistanceOhm ?? 1);
    const loadCurrentA = s.meanBatteryV / charging.loadResistanceOhm;
    expect(s.meanOutputCurrentA).toBeGreaterThan(10);
    expect(Math.abs(s.meanOutputCurrentA - (batteryCurrentA + loadCurrentA))).toBeLessThan(0.002 * s.meanOutputCurrentA);
    // Ohm's law on the two cables: B+ to case minus the post voltage is the drop in both.
    const cableDropV = s.meanOutputCurrentA * (charging.bplusResistanceOhm + charging.groundResistanceOhm);
    expect(s.meanBplusV - s.meanBatteryV).toBeCloseTo(cableDropV, 3);
    expect(s.dominantRippleHz).toBe(6 * ELECTRICAL_HZ);

    // Common practice, no source: in periodic steady state every measured cycle has the same mean,
    // and three times the settling does not move the answer.
    const cycles = run.cycleMeanCurrentA;
    expect(cycles).toHaveLength(run.options.measureCycles);
    expect((Math.max(...cycles) - Math.min(...cycles)) / s.meanOutputCurrentA).toBeLessThan(1e-3);
    const longer = await spiceRun(charging, { settleCycles: 3 * run.options.settleCycles });
    expect(Math.abs(longer.solution.meanOutputCurrentA / s.meanOutputCurrentA - 1)).toBeLessThan(1e-3);
    expect(Math.abs(longer.solution.rippleRmsV / s.rippleRmsV - 1)).toBeLessThan(1e-2);
  });
});
