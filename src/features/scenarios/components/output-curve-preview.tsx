import { useDeferredValue, useMemo } from 'react';
import type { Fault } from '../../../../sim/faults.ts';
import { faultChange } from '../../../../sim/faults.ts';
import { faultedCurveExcess, outputCurve, type OutputCurvePoint } from '../../../../sim/instruments.ts';
import type { VehicleParams } from '../../../../sim/params.ts';
import { CurveExcessNote } from '../../../components/curve-excess-note.tsx';
import { OutputCurveChart } from '../../../components/output-curve-chart.tsx';

interface Curves {
  healthy: OutputCurvePoint[];
  faulted: OutputCurvePoint[];
}

function runModel(params: VehicleParams, faults: readonly Fault[]): Curves | { error: string } {
  try {
    return { healthy: outputCurve(params, [], { hot: false }), faulted: outputCurve(params, faults.map((f) => faultChange(f)), { hot: false }) };
  } catch (err) {
    return { error: (err as Error).message };
  }
}

/** The model's output curve, healthy and with the scenario's faults, side by side on the same scales. */
export function OutputCurvePreview({ params, faults, passMarkA }: { params: VehicleParams | null; faults: readonly Fault[]; passMarkA: number }) {
  const deferredParams = useDeferredValue(params);
  const deferredFaults = useDeferredValue(faults);
  const result = useMemo(() => (deferredParams ? runModel(deferredParams, deferredFaults) : null), [deferredParams, deferredFaults]);
  if (!params || !result) {
    return <p className="text-sm text-warn-700">Fix the highlighted vehicle values to update the preview.</p>;
  }
  if ('error' in result) {
    return (
      <p className="text-sm text-slate-500" role="status">
        The model preview is not available: {result.error}
      </p>
    );
  }
  const ratedA = params.alternator.ratedCurrentA;
  const ratio = params.belt.pulleyRatio;
  // Up to the speed the bench can hold (or the rating speed, whichever is higher).
  const maxRpm = Math.max(params.engine.maxHeldRpm * ratio, params.alternator.ratedAltRpm) * 1.05;
  const within = (c: OutputCurvePoint[]) => c.filter((p) => p.altRpm <= maxRpm);
  const healthy = within(result.healthy);
  const faulted = within(result.faulted);
  const maxA = Math.max(ratedA * 1.15, ...healthy.map((p) => p.currentA), ...faulted.map((p) => p.currentA));
  const scale = { maxRpm, maxA };
  const markers = [
    { rpm: params.engine.idleRpm * ratio, label: 'idle' },
    { rpm: 2000 * ratio, label: '2,000 engine rpm' },
  ].filter((m) => m.rpm <= maxRpm);
  const excess = faults.length ? faultedCurveExcess(healthy, faulted) : null;
  return (
    <div>
      <div className="flex flex-col gap-4 md:flex-row" data-testid="output-curve-preview">
        <OutputCurveChart title="Healthy" fitted={healthy} ratedA={ratedA} passMarkA={passMarkA} scale={scale} markers={markers} tone="live" width={360} height={220} />
        <OutputCurveChart
          title={faults.length ? 'With the faults' : 'With the faults (none set)'}
          fitted={faulted}
          ratedA={ratedA}
          passMarkA={passMarkA}
          scale={scale}
          markers={markers}
          tone="warn"
          width={360}
          height={220}
        />
      </div>
      <CurveExcessNote excess={excess} />
    </div>
  );
}
