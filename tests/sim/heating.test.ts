/**
 * The alternator heats with its stator's copper loss, the phase rms currents
 * of the periodic bridge solution, not with its output current (Joule's law,
 * P = R (I_A^2 + I_B^2 + I_C^2): any machines textbook). A bridge fault that
 * leaves one phase carrying a standing DC current heats the unit more for the
 * same output (docs/model.md, "One open diode").
 */
import { describe, expect, it } from 'vitest';
import { Bench } from './bench';

function heldLoaded(fault: 'diode-open' | null): Bench {
  const b = new Bench();
  if (fault) b.inject(fault, 1);
  b.start().rpm(2000).accessory('headlamps', true).accessory('blower', true).pile(0.25);
  return b.wait(1200);
}

describe('the alternator heats with its stator copper loss', () => {
  it('a healthy unit\'s phases carry about what six-step phase currents carry', () => {
    // Six-step phase currents (Hart, Power Electronics): each phase carries the output for two thirds of a cycle,
    // so the three phases' squares sum to at most twice the output squared; commutation overlap rounds the steps
    // off and brings the sum a little lower.
    const s = heldLoaded(null).point.state;
    expect(s.net.bridgeCurrentA).toBeGreaterThan(90);
    const squaresPerOutput = s.net.statorSquaresA2 / (s.net.bridgeCurrentA * s.net.bridgeCurrentA);
    expect(squaresPerOutput).toBeGreaterThan(1.4);
    expect(squaresPerOutput).toBeLessThanOrEqual(2);
  });

  it('with one diode open the stator loses more in its copper for the same output, and the unit runs hotter', () => {
    // Joule's law on the phase rms currents: the faulted phase carries a standing DC current (ngspice shows it on
    // the same circuit, tests/reference).
    const healthy = heldLoaded(null).point.state;
    const open = heldLoaded('diode-open').point.state;
    const perOutput = (s: typeof healthy) => s.net.statorSquaresA2 / (s.net.bridgeCurrentA * s.net.bridgeCurrentA);
    expect(perOutput(open)).toBeGreaterThan(1.15 * perOutput(healthy));
    expect(open.alternatorTempC).toBeGreaterThan(healthy.alternatorTempC + 3);
  });
});
