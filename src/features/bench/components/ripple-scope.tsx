/** A small scope view of the AC part of the voltage between the leads. */
import { memo } from 'react';
import { scaleLinear } from 'd3-scale';
import { line } from 'd3-shape';
import type { RippleTrace } from '../../../../sim/instruments.ts';
import { useBench } from '../hooks/use-bench.ts';

const W = 280;
const H = 160;

/** Volts per division that fit the trace in four divisions each way. */
export function scopeScaleV(peakV: number): number {
  const steps = [0.01, 0.02, 0.05, 0.1, 0.2, 0.5, 1, 2, 5];
  return steps.find((s) => s * 4 >= peakV) ?? 5;
}

export const RippleScopeView = memo(function RippleScopeView({ trace, leadsOn }: { trace: RippleTrace | null; leadsOn: boolean }) {
  const samples = trace?.acV ?? [];
  const peak = samples.reduce((m, v) => Math.max(m, Math.abs(v)), 0);
  const perDiv = scopeScaleV(peak);
  const x = scaleLinear()
    .domain([0, Math.max(1, samples.length - 1)])
    .range([0, W]);
  const y = scaleLinear()
    .domain([-4 * perDiv, 4 * perDiv])
    .range([H, 0]);
  const path =
    line<number>()
      .x((_, i) => x(i))
      .y((v) => y(v))(samples) ?? '';
  const spanMs = trace ? trace.sampleIntervalS * samples.length * 1000 : 0;
  return (
    <figure>
      <svg viewBox={`0 0 ${W} ${H}`} className="h-auto w-full rounded-md bg-slate-900" role="img" aria-label={trace ? `Ripple trace, ${Math.round(perDiv * 1000)} millivolts per division` : leadsOn ? 'Ripple trace: no AC between the leads' : 'Ripple trace: connect both leads'}>
        {Array.from({ length: 9 }, (_, i) => (
          <line key={`h${i}`} x1={0} x2={W} y1={(H * i) / 8} y2={(H * i) / 8} className={i === 4 ? 'stroke-slate-600' : 'stroke-slate-800'} />
        ))}
        {Array.from({ length: 11 }, (_, i) => (
          <line key={`v${i}`} y1={0} y2={H} x1={(W * i) / 10} x2={(W * i) / 10} className="stroke-slate-800" />
        ))}
        {trace ? <path d={path} fill="none" className="stroke-live-300" strokeWidth={1.5} /> : null}
      </svg>
      <figcaption className="mt-1 flex justify-between text-xs text-slate-500">
        <span>{trace ? `${perDiv >= 1 ? `${perDiv} V` : `${Math.round(perDiv * 1000)} mV`}/div` : leadsOn ? 'no AC between the leads' : 'connect both leads'}</span>
        <span>{trace ? `${spanMs.toFixed(1)} ms across · ${Math.round(trace.electricalHz)} Hz electrical` : ''}</span>
      </figcaption>
    </figure>
  );
});

export function RippleScope() {
  const trace = useBench((s) => s.trace);
  const leadsOn = useBench((s) => s.controls.leads.red !== null && s.controls.leads.black !== null);
  return <RippleScopeView trace={trace} leadsOn={leadsOn} />;
}
