/**
 * Diagnosis times of a class as a dot plot over a time axis: one dot per
 * student (stacked where times are close), the median as a line, and for a
 * student their own dot marked. No names are drawn.
 */
import { scaleLinear } from 'd3-scale';
import { line } from 'd3-shape';
import type { Distribution } from '../../../../shared/api/compare.ts';

const W = 640;
const H = 150;
const M = { left: 40, right: 20, top: 16, bottom: 40 };
const R = 6;

const minutes = (ms: number) => ms / 60_000;

export function stackDots(timesMs: readonly number[], x: (ms: number) => number): { ms: number; cx: number; row: number }[] {
  const placed: { ms: number; cx: number; row: number }[] = [];
  for (const ms of timesMs) {
    const cx = x(ms);
    let row = 0;
    while (placed.some((p) => p.row === row && Math.abs(p.cx - cx) < R * 2)) row++;
    placed.push({ ms, cx, row });
  }
  return placed;
}

export function DiagnosisDistribution({ distribution }: { distribution: Distribution }) {
  const { timesMs, mineMs, medianMs, myPlace } = distribution;
  if (timesMs.length === 0) return <p className="text-sm text-slate-500">No submitted attempts yet.</p>;
  const maxMin = Math.max(1, ...timesMs.map(minutes)) * 1.08;
  const x = scaleLinear().domain([0, maxMin]).range([M.left, W - M.right]).nice();
  const xMs = (ms: number) => x(minutes(ms));
  const dots = stackDots(timesMs, xMs);
  const base = H - M.bottom;
  const axis = line<[number, number]>()([
    [M.left, base],
    [W - M.right, base],
  ]);
  let mineMarked = false;
  const summary =
    `${timesMs.length} diagnosis times from ${minutes(timesMs[0]!).toFixed(1)} to ${minutes(timesMs.at(-1)!).toFixed(1)} minutes` +
    (medianMs !== null ? `, median ${minutes(medianMs).toFixed(1)} minutes` : '') +
    (mineMs !== null && myPlace !== null ? `. Yours: ${minutes(mineMs).toFixed(1)} minutes, place ${myPlace} of ${timesMs.length}.` : '.');
  return (
    <figure>
      <svg viewBox={`0 0 ${W} ${H}`} className="w-full max-w-3xl" role="img" aria-label={summary}>
        <path d={axis ?? ''} className="stroke-slate-400" strokeWidth={1} />
        {x.ticks(6).map((t) => (
          <g key={t} transform={`translate(${x(t)},${base})`}>
            <line y2={5} className="stroke-slate-400" />
            <text y={18} textAnchor="middle" className="fill-slate-500 text-[11px]">
              {t}
            </text>
          </g>
        ))}
        <text x={(M.left + W - M.right) / 2} y={H - 6} textAnchor="middle" className="fill-slate-600 text-[12px]">
          Time to diagnosis (minutes of bench time)
        </text>
        {medianMs !== null && (
          <g>
            <line x1={xMs(medianMs)} x2={xMs(medianMs)} y1={M.top} y2={base} className="stroke-slate-400" strokeDasharray="4 3" />
            <text x={xMs(medianMs) + 4} y={M.top + 10} className="fill-slate-500 text-[11px]">
              median
            </text>
          </g>
        )}
        {dots.map((d, i) => {
          const mine = !mineMarked && mineMs !== null && d.ms === mineMs;
          if (mine) mineMarked = true;
          const cy = base - R - 2 - d.row * (R * 2 + 1);
          return mine ? (
            <g key={i}>
              <circle cx={d.cx} cy={cy} r={R + 2} className="fill-live-500 stroke-live-700" strokeWidth={2} />
              <text x={d.cx} y={cy - R - 6} textAnchor="middle" className="fill-live-700 text-[12px] font-semibold">
                you
              </text>
            </g>
          ) : (
            <circle key={i} cx={d.cx} cy={cy} r={R} className="fill-slate-400/80" />
          );
        })}
      </svg>
      <figcaption className="mt-1 text-sm text-slate-600">{summary}</figcaption>
    </figure>
  );
}
