import { scaleLinear } from 'd3-scale';
import { line } from 'd3-shape';
import { useDeferredValue, useMemo } from 'react';
import type { Fault } from '../../../../sim/faults.ts';
import { faultChange } from '../../../../sim/faults.ts';
import { outputCurve, type OutputCurvePoint } from '../../../../sim/instruments.ts';
import type { VehicleParams } from '../../../../sim/params.ts';

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

const W = 360;
const H = 220;
const M = { top: 12, right: 12, bottom: 36, left: 44 };

function Chart({
  title,
  points,
  ratedA,
  passMarkA,
  maxA,
  maxRpm,
  markers,
  tone,
}: {
  title: string;
  points: OutputCurvePoint[];
  ratedA: number;
  passMarkA: number;
  maxA: number;
  maxRpm: number;
  markers: { rpm: number; label: string }[];
  tone: 'live' | 'warn';
}) {
  const x = scaleLinear().domain([0, maxRpm]).range([M.left, W - M.right]);
  const y = scaleLinear().domain([0, maxA]).range([H - M.bottom, M.top]).nice();
  const path = line<OutputCurvePoint>()
    .x((p) => x(p.altRpm))
    .y((p) => y(Math.max(0, p.currentA)))(points);
  const peak = points.reduce((m, p) => Math.max(m, p.currentA), 0);
  const stroke = tone === 'live' ? 'stroke-live-600' : 'stroke-warn-500';
  return (
    <figure className="min-w-0 flex-1">
      <figcaption className="mb-1 flex items-baseline justify-between text-sm">
        <span className="font-medium text-slate-800">{title}</span>
        <span className={`font-mono text-xs ${tone === 'live' ? 'text-live-700' : 'text-warn-700'}`}>peak {peak.toFixed(0)} A</span>
      </figcaption>
      <svg viewBox={`0 0 ${W} ${H}`} className="w-full rounded-md bg-white ring-1 ring-slate-200" role="img" aria-label={`${title}: output current against alternator speed, peak ${peak.toFixed(0)} A against a rating of ${ratedA} A`}>
        {y.ticks(5).map((t) => (
          <g key={`y${t}`}>
            <line x1={M.left} x2={W - M.right} y1={y(t)} y2={y(t)} className="stroke-slate-100" />
            <text x={M.left - 6} y={y(t)} dy="0.32em" textAnchor="end" className="fill-slate-500 text-[10px]">
              {t}
            </text>
          </g>
        ))}
        {x.ticks(5).map((t) => (
          <text key={`x${t}`} x={x(t)} y={H - M.bottom + 14} textAnchor="middle" className="fill-slate-500 text-[10px]">
            {t / 1000}k
          </text>
        ))}
        <text x={(M.left + W - M.right) / 2} y={H - 6} textAnchor="middle" className="fill-slate-500 text-[10px]">
          alternator rpm
        </text>
        <text x={10} y={M.top + 4} className="fill-slate-500 text-[10px]">
          A
        </text>
        {markers.map((m) => (
          <g key={m.label}>
            <line x1={x(m.rpm)} x2={x(m.rpm)} y1={M.top} y2={H - M.bottom} className="stroke-slate-300" strokeDasharray="2 3" />
            <text x={x(m.rpm) + 3} y={M.top + 8} className="fill-slate-500 text-[9px]">
              {m.label}
            </text>
          </g>
        ))}
        <line x1={M.left} x2={W - M.right} y1={y(ratedA)} y2={y(ratedA)} className="stroke-slate-500" strokeDasharray="6 3" />
        <text x={M.left + 4} y={y(ratedA) - 4} className="fill-slate-600 text-[9px]">
          rating {ratedA} A
        </text>
        <line x1={M.left} x2={W - M.right} y1={y(passMarkA)} y2={y(passMarkA)} className="stroke-slate-400" strokeDasharray="2 2" />
        <text x={M.left + 4} y={y(passMarkA) + 10} className="fill-slate-500 text-[9px]">
          pass mark {passMarkA.toFixed(0)} A
        </text>
        {path && <path d={path} fill="none" strokeWidth={2.5} className={stroke} />}
      </svg>
    </figure>
  );
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
  const markers = [
    { rpm: params.engine.idleRpm * ratio, label: 'idle' },
    { rpm: 2000 * ratio, label: '2,000 engine rpm' },
  ].filter((m) => m.rpm <= maxRpm);
  return (
    <div className="flex flex-col gap-4 md:flex-row" data-testid="output-curve-preview">
      <Chart title="Healthy" points={healthy} ratedA={ratedA} passMarkA={passMarkA} maxA={maxA} maxRpm={maxRpm} markers={markers} tone="live" />
      <Chart
        title={faults.length ? 'With the faults' : 'With the faults (none set)'}
        points={faulted}
        ratedA={ratedA}
        passMarkA={passMarkA}
        maxA={maxA}
        maxRpm={maxRpm}
        markers={markers}
        tone="warn"
      />
    </div>
  );
}
