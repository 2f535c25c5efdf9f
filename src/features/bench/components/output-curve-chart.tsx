/** The fitted unit's output against alternator speed, with the student's own measured points. */
import { scaleLinear } from 'd3-scale';
import { line } from 'd3-shape';
import { faultedCurveExcess, type OutputCurvePoint } from '../../../../sim/instruments.ts';
import { CurveExcessNote } from '../../../components/curve-excess-note.tsx';

const W = 520;
const H = 240;
const M = { top: 14, right: 16, bottom: 34, left: 44 };

export function OutputCurveChart({
  fitted,
  healthy,
  measured,
  ratedA,
}: {
  fitted: OutputCurvePoint[];
  healthy?: OutputCurvePoint[];
  measured: OutputCurvePoint[];
  ratedA?: number;
}) {
  const all = [...fitted, ...(healthy ?? []), ...measured];
  const maxRpm = Math.max(1000, ...all.map((p) => p.altRpm));
  const maxA = Math.max(20, ratedA ?? 0, ...all.map((p) => p.currentA));
  const x = scaleLinear().domain([0, maxRpm]).range([M.left, W - M.right]).nice();
  const y = scaleLinear()
    .domain([0, maxA * 1.1])
    .range([H - M.bottom, M.top])
    .nice();
  const path = line<OutputCurvePoint>()
    .x((p) => x(p.altRpm))
    .y((p) => y(p.currentA));
  const excess = healthy ? faultedCurveExcess(healthy, fitted) : null;
  return (
    <div>
      <svg viewBox={`0 0 ${W} ${H}`} className="h-auto w-full" role="img" aria-label={`Output curve of the fitted alternator with ${measured.length} measured point${measured.length === 1 ? '' : 's'}`}>
        {x.ticks(6).map((t) => (
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
        <text x={12} y={M.top + 4} className="fill-slate-500 text-[11px]">
          A
        </text>
        {ratedA !== undefined && (
          <g>
            <line x1={M.left} x2={W - M.right} y1={y(ratedA)} y2={y(ratedA)} className="stroke-warn-500" strokeDasharray="5 4" />
            <text x={W - M.right} y={y(ratedA) - 4} textAnchor="end" className="fill-warn-700 text-[10px]">
              rated {ratedA} A
            </text>
          </g>
        )}
        {healthy && <path d={path(healthy) ?? ''} fill="none" className="stroke-slate-400" strokeWidth={1.5} strokeDasharray="4 3" />}
        <path d={path(fitted) ?? ''} fill="none" className="stroke-live-600" strokeWidth={2.5} />
        {measured.map((p, i) => (
          <circle key={i} cx={x(p.altRpm)} cy={y(p.currentA)} r={5} className="fill-white stroke-slate-900" strokeWidth={2} />
        ))}
      </svg>
      <CurveExcessNote excess={excess} />
    </div>
  );
}
