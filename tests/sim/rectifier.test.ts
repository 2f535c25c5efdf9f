/**
 * The circuit the model hands to the SPICE harness, and the model's own
 * solution of it, against the state it came from.
 */
import { describe, expect, it } from 'vitest';
import { rectifierCircuitAt, solveRectifier } from '../../sim/rectifier';
import { readMeters, rippleTrace } from '../../sim/instruments';
import { Bench } from './bench';

function loadedAt2000(kind?: 'diode-open') {
  const b = new Bench();
  if (kind) b.inject(kind);
  return b.leads('battery-pos', 'battery-neg').start().rpm(2000).wait(3).pile(0.7).wait(2);
}

describe('the rectifier circuit of a state', () => {
  it('describes the running alternator: electrical frequency p × N / 60 and a battery on the DC side', () => {
    // US Navy NEETS (f = p·N/60).
    const b = loadedAt2000();
    const c = rectifierCircuitAt(b.params, b.point.state);
    expect(c.electricalHz).toBeCloseTo((6 * b.point.state.altRpm) / 60, 9);
    expect(c.battery).not.toBeNull();
    expect(c.openDiodes).toEqual([]);
  });

  it('solves to the bridge current and battery voltage of the state within 2 %', () => {
    // Self-consistency of the model (the loads are lumped across the posts in the circuit).
    const b = loadedAt2000();
    const s = b.point.state;
    const sol = solveRectifier(rectifierCircuitAt(b.params, s));
    expect(Math.abs(sol.meanOutputCurrentA / s.net.bridgeCurrentA - 1)).toBeLessThan(0.02);
    expect(Math.abs(sol.meanBatteryV / s.net.nodeV.batteryPos - 1)).toBeLessThan(0.02);
  });

  it('carries an injected fault into the circuit', () => {
    const b = loadedAt2000('diode-open');
    expect(rectifierCircuitAt(b.params, b.point.state).openDiodes).toEqual([0]);
  });
});

describe('the ripple trace', () => {
  it('shows three electrical cycles of AC at the leads whose rms matches the AC reading', () => {
    // Self-consistency: the trace and the AC reading come from the same periodic solution.
    for (const kind of [undefined, 'diode-open'] as const) {
      const b = loadedAt2000(kind);
      const samples = 300;
      const trace = rippleTrace(b.params, b.point.state, samples)!;
      expect(trace.acV.length).toBe(samples);
      const mean = trace.acV.reduce((a, v) => a + v, 0) / trace.acV.length;
      const rms = Math.sqrt(trace.acV.reduce((a, v) => a + (v - mean) ** 2, 0) / trace.acV.length);
      expect(Math.abs(mean)).toBeLessThan(0.05 * rms + 1e-6);
      const reading = readMeters(b.params, b.point.state).rippleVac! - 0.004;
      expect(Math.abs(rms / reading - 1)).toBeLessThan(0.1);
      expect(trace.sampleIntervalS * 100).toBeCloseTo(1 / trace.electricalHz, 9);
    }
  });

  it('is empty with a lead off or the engine stopped', () => {
    const b = new Bench().leads('battery-pos', null).wait(0.1);
    expect(rippleTrace(b.params, b.point.state, 100)).toBeNull();
    b.leads('battery-pos', 'battery-neg').wait(0.1);
    expect(rippleTrace(b.params, b.point.state, 100)).toBeNull();
  });
});
