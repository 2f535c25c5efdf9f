// @vitest-environment happy-dom
import { afterEach, describe, expect, it } from 'vitest';
import { cleanup, render, screen } from '@testing-library/react';
import { FAULT_CATALOG, FAULT_KINDS, faultChange } from '../../sim/faults';
import type { Fault } from '../../sim/faults';
import { faultedCurveExcess, outputCurve } from '../../sim/instruments';
import { defaultVehicleParams } from '../../sim/params';
import { OutputCurvePreview } from '../../src/features/scenarios/components/output-curve-preview.tsx';
import { OutputCurveChart } from '../../src/components/output-curve-chart.tsx';

afterEach(cleanup);

const fault = (kind: Fault['kind']): Fault => ({ id: kind, kind, severity01: FAULT_CATALOG[kind].librarySeverity01, onsetS: 0 });

describe('a faulted output curve above the healthy one', () => {
  it('is found where the faulted curve gives more than the margin above, and nowhere else', () => {
    const healthy = [0, 1000, 2000, 3000].map((altRpm) => ({ altRpm, currentA: altRpm / 20 }));
    const faulted = [
      { altRpm: 0, currentA: 0 },
      { altRpm: 1000, currentA: 40 },
      { altRpm: 2000, currentA: 100.5 },
      { altRpm: 3000, currentA: 160 },
    ];
    expect(faultedCurveExcess(healthy, faulted)).toEqual({ fromAltRpm: 3000, toAltRpm: 3000, mostA: 10 });
    expect(faultedCurveExcess(healthy, healthy)).toBeNull();
  });

  it('happens among the catalogue faults only with an open diode, and only at speed', () => {
    // The circuit's own behaviour (ngspice agrees, tests/reference): one diode open gives the healthy output or a
    // little more at speed. Every other catalogue fault gives less than healthy everywhere.
    const p = defaultVehicleParams();
    const healthy = outputCurve(p, [], { hot: false });
    for (const kind of FAULT_KINDS) {
      const excess = faultedCurveExcess(healthy, outputCurve(p, [faultChange(fault(kind))], { hot: false }));
      if (kind === 'diode-open') {
        expect(excess).not.toBeNull();
        expect(excess!.fromAltRpm).toBeGreaterThan(2000 * p.belt.pulleyRatio * 0.9);
      } else expect(excess, kind).toBeNull();
    }
  });

  it('the editor preview explains it under the charts with an open diode, and says nothing with a shorted one', () => {
    const p = defaultVehicleParams();
    render(<OutputCurvePreview params={p} faults={[fault('diode-open')]} passMarkA={135} />);
    expect(screen.getByRole('note').textContent).toMatch(/standing DC current/);
    cleanup();
    render(<OutputCurvePreview params={p} faults={[fault('diode-shorted')]} passMarkA={135} />);
    expect(screen.queryByRole('note')).toBeNull();
  });

  it('the result chart explains it when the fitted unit lies above the healthy one', () => {
    const p = defaultVehicleParams();
    const healthy = outputCurve(p, [], { hot: false });
    render(<OutputCurveChart fitted={outputCurve(p, [faultChange(fault('diode-open'))], { hot: false })} healthy={healthy} measured={[]} ratedA={150} />);
    expect(screen.getByRole('note').textContent).toMatch(/alternator rpm the faulted curve lies above the healthy one/);
    cleanup();
    render(<OutputCurveChart fitted={outputCurve(p, [faultChange(fault('stator-phase-open'))], { hot: false })} healthy={healthy} measured={[]} ratedA={150} />);
    expect(screen.queryByRole('note')).toBeNull();
  });
});
