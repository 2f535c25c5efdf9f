/** Volts and amps over the last minute: two traces on their own scales. */
import { memo } from 'react';
import { scaleLinear } from 'd3-scale';
import { line } from 'd3-shape';
import { HISTORY_SPAN_MS, type HistorySample } from '../stores/bench-engine.ts';
import { useBench } from '../hooks/use-bench.ts';

const W = 400;
const H = 170;
const M = { top: 14, right: 34, bottom: 22, left: 34 };

function extent(values: number[], fallback: [number, number], minSpan: number): [number, number] {
  if (!values.length) return fallback;
  let lo = Math.min(...values);
  let hi = Math.max(...values);
  if (hi - lo < minSpan) {
    const mid = (hi + lo) / 2;
    lo = mid - minSpan / 2;
    hi = mid + minSpan / 2;
  }
  const pad = (hi - lo) * 0.1;
  return [lo - pad, hi + pad];
}

export const StripChartView = memo(function StripChartView({ history, nowMs }: { history: readonly HistorySample[]; nowMs: number }) {
  const x = scaleLinear()
    .domain([nowMs - HISTORY_SPAN_MS, nowMs])
    .range([M.left, W - M.right]);
  const volts = history.flatMap((h) => (h.volts === null ? [] : [h.volts]));
  const amps = history.flatMap((h) => (h.amps === null ? [] : [h.amps]));
  const yV = scaleLinear().domain(extent(volts, [11, 15], 1)).range([H - M.bottom, M.top]).nice();
  const yA = scaleLinear().domain(extent(amps, [-10, 10], 10)).range([H - M.bottom, M.top]).nice();
  const voltLine = line<HistorySample>()
    .defined((h) => h.volts !== null)
    .x((h) => x(h.tMs))
    .y((h) => yV(h.volts ?? 0));
  const ampLine = line<HistorySample>()
    .defined((h) => h.amps !== null)
    .x((h) => x(h.tMs))
    .y((h) => yA(h.amps ?? 0));
  const secs = [60, 45, 30, 15, 0];
  return (
    <svg viewBox={`0 0 ${W} ${H}`} className="h-auto w-full" role="img" aria-label="Strip chart of volts and amps over the last minute">
      {secs.map((s) => (
        <g key={s}>
          <line x1={x(nowMs - s * 1000)} x2={x(nowMs - s * 1000)} y1={M.top} y2={H - M.bottom} className="stroke-slate-100" />
          <text x={x(nowMs - s * 1000)} y={H - 6} textAnchor="middle" className="fill-slate-500 text-[10px]">
            {s === 0 ? 'now' : `−${s} s`}
          </text>
        </g>
      ))}
      {yV.ticks(4).map((t) => (
        <text key={`v${t}`} x={M.left - 6} y={yV(t) + 3} textAnchor="end" className="fill-live-700 text-[10px]">
          {t.toFixed(1)}
        </text>
      ))}
      {yA.ticks(4).map((t) => (
        <text key={`a${t}`} x={W - M.right + 6} y={yA(t) + 3} className="fill-slate-500 text-[10px]">
          {t}
        </text>
      ))}
      <text x={M.left - 6} y={M.top - 2} textAnchor="end" className="fill-live-700 text-[10px] font-medium">
        V
      </text>
      <text x={W - M.right + 6} y={M.top - 2} className="fill-slate-500 text-[10px] font-medium">
        A
      </text>
      <path d={ampLine(history as HistorySample[]) ?? ''} fill="none" className="stroke-slate-500" strokeWidth={1.5} strokeDasharray="4 2" />
      <path d={voltLine(history as HistorySample[]) ?? ''} fill="none" className="stroke-live-500" strokeWidth={2} />
    </svg>
  );
});

export function StripChart() {
  const history = useBench((s) => s.history);
  const last = history.length ? history[history.length - 1]!.tMs : 0;
  return (
    <div>
      <div className="mb-1 flex gap-4 text-xs text-slate-500">
        <span className="flex items-center gap-1">
          <span className="inline-block h-0.5 w-4 bg-live-500" /> volts
        </span>
        <span className="flex items-center gap-1">
          <span className="inline-block h-0.5 w-4 border-t border-dashed border-slate-500" /> amps (clamp)
        </span>
      </div>
      <StripChartView history={history} nowMs={last} />
    </div>
  );
}
