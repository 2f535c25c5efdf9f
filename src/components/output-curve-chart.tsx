/**
 * An alternator's output against its speed: one chart for the scenario
 * editor's preview (healthy and faulted side by side, on shared scales, with
 * the pass mark and the engine speeds that matter) and for the bench's results
 * and try-out (the fitted unit, a healthy one dashed beneath, and the
 * student's measured points).
 */
import { scaleLinear } from 'd3-scale';
import { line } from 'd3-shape';
import { faultedCurveExcess, type OutputCurvePoint } from '../../sim/instruments.ts';
import { CurveExcessNote } from './curve-excess-note.tsx';

const M = { top: 14, right: 16, bottom: 34, left: 50 };

export interface OutputCurveChartProps {
  /** The curve drawn solid: the unit on the car (or the one this chart shows). */
  fitted: OutputCurvePoint[];
  /** A healthy unit's curve, dashed beneath; the note below explains where the fitted one lies above it. */
  healthy?: OutputCurvePoint[];
  /** Readings taken, as dots. */
  measured?: OutputCurvePoint[];
  ratedA?: number;
  passMarkA?: number;
  /** Alternator speeds worth a dotted line (idle, a test speed). */
  markers?: readonly { rpm: number; label: string }[];
  /** Scales shared with a chart beside it; otherwise from the curves. */
  scale?: { maxRpm: number; maxA: number };
  /** A caption over the chart, with the solid curve's peak. */
  title?: string;
  tone?: 'live' | 'warn';
  width?: number;
  height?: number;
}

export function OutputCurveChart({ fitted, healthy, measured = [], ratedA, passMarkA, markers = [], scale, title, tone = 'live', width: W = 520, height: H = 240 }: OutputCurveChartProps) {
  const all = [...fitted, ...(healthy ?? []), ...measured];
  const maxRpm = scale?.maxRpm ?? Math.max(1000, ...all.map((p) => p.altRpm));
  const maxA = scale?.maxA ?? Math.max(20, ratedA ?? 0, ...all.map((p) => p.currentA)) * 1.1;
  const x = scaleLinear().domain([0, maxRpm]).range([M.left, W - M.right]);
  if (!scale) x.nice();
  const y = scaleLinear().domain([0, maxA]).range([H - M.bottom, M.top]).nice();
  const path = line<OutputCurvePoint>()
    .x((p) => x(p.altRpm))
    .y((p) => y(Math.max(0, p.currentA)));
  const peak = fitted.reduce((m, p) => Math.max(m, p.currentA), 0);
  const excess = healthy ? faultedCurveExcess(healthy, fitted) : null;
  const label = title
    ? `${title}: output current against alternator speed, peak ${peak.toFixed(0)} A${ratedA !== undefined ? ` against a rating of ${ratedA} A` : ''}`
    : `Output curve of the fitted alternator with ${measured.length} measured point${measured.length === 1 ? '' : 's'}`;
  return (
    <figure className="min-w-0 flex-1">
      {title && (
        <figcaption className="mb-1 flex items-baseline justify-between text-sm">
          <span className="font-medium text-slate-800">{title}</span>
          <span className={`font-mono text-xs ${tone === 'live' ? 'text-live-700' : 'text-warn-700'}`}>peak {peak.toFixed(0)} A</span>
        </figcaption>
      )}
      <svg viewBox={`0 0 ${W} ${H}`} className="h-auto w-full rounded-md bg-white ring-1 ring-slate-200" role="img" aria-label={label}>
        {x.ticks(W < 400 ? 5 : 6).map((t) => (
          <g key={`x${t}`}>
            <line x1={x(t)} x2={x(t)} y1={M.top} y2={H - M.bottom} className="stroke-slate-100" />
            <text x={x(t)} y={H - M.bottom + 14} textAnchor="middle" className="fill-slate-500 text-[10px]">
              {t.toLocaleString('en-US')}
            </text>
          </g>
        ))}
        {y.ticks(5).map((t) => (
          <g key={`y${t}`}>
            <line x1={M.left} x2={W - M.right} y1={y(t)} y2={y(t)} className="stroke-slate-100" />
            <text x={M.left - 6} y={y(t) + 3} textAnchor="end" className="fill-slate-500 text-[10px]">
              {t}
            </text>
          </g>
        ))}
        <text x={(M.left + W - M.right) / 2} y={H - 4} textAnchor="middle" className="fill-slate-500 text-[11px]">
          alternator rpm
        </text>
        <text x={6} y={M.top + 4} className="fill-slate-500 text-[11px]">
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
        {ratedA !== undefined && (
          <g>
            <line x1={M.left} x2={W - M.right} y1={y(ratedA)} y2={y(ratedA)} className="stroke-warn-500" strokeDasharray="5 4" />
            {/* At the left, where an output curve is still low, so the curve never crosses the words. */}
            <text x={M.left + 4} y={y(ratedA) - 4} className="fill-warn-700 text-[10px]">
              rated {ratedA} A
            </text>
          </g>
        )}
        {passMarkA !== undefined && (
          <g>
            <line x1={M.left} x2={W - M.right} y1={y(passMarkA)} y2={y(passMarkA)} className="stroke-slate-400" strokeDasharray="2 2" />
            <text x={M.left + 4} y={y(passMarkA) + 10} className="fill-slate-500 text-[9px]">
              pass mark {passMarkA.toFixed(0)} A
            </text>
          </g>
        )}
        {healthy && <path d={path(healthy) ?? ''} fill="none" className="stroke-slate-400" strokeWidth={1.5} strokeDasharray="4 3" />}
        <path d={path(fitted) ?? ''} fill="none" className={tone === 'live' ? 'stroke-live-600' : 'stroke-warn-500'} strokeWidth={2.5} />
        {measured.map((p, i) => (
          <circle key={i} cx={x(p.altRpm)} cy={y(p.currentA)} r={5} className="fill-white stroke-slate-900" strokeWidth={2} />
        ))}
      </svg>
      <CurveExcessNote excess={excess} />
    </figure>
  );
}
