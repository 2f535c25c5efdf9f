/** The bench clock, and letting sim time pass quickly: for a rest before an open-circuit reading or for modules to sleep. */
import { MAX_ATTEMPT_MS } from '../../../../shared/api/attempts.ts';
import { useBench, useBenchEngine } from '../hooks/use-bench.ts';

const SKIPS = [
  [10_000, '10 s'],
  [60_000, '1 min'],
  [300_000, '5 min'],
] as const;

export function BenchClock() {
  const seconds = useBench((s) => Math.floor(s.timeMs / 1000));
  const m = Math.floor(seconds / 60);
  const sec = seconds % 60;
  return (
    <span className="whitespace-nowrap rounded-full bg-white px-2.5 py-1 font-mono text-xs font-medium text-slate-700 ring-1 ring-slate-200" role="timer" aria-label={`Bench time ${m} minutes ${sec} seconds`}>
      {String(m).padStart(2, '0')}:{String(sec).padStart(2, '0')}
    </span>
  );
}

export function TimeControls() {
  const engine = useBenchEngine();
  const atLimit = useBench((s) => s.timeMs >= MAX_ATTEMPT_MS);
  if (atLimit) {
    return (
      <p className="text-sm text-slate-700" role="status">
        This attempt has run for {MAX_ATTEMPT_MS / 3_600_000} hours of bench time, the most one may: record what you need and submit.
      </p>
    );
  }
  return (
    <div role="group" aria-label="Let time pass" className="inline-flex items-center gap-1">
      <span className="hidden text-xs text-slate-600 xl:inline">Let time pass</span>
      {SKIPS.map(([ms, label]) => (
        <button
          key={label}
          type="button"
          onClick={() => engine.skipAhead(ms)}
          aria-label={`Let ${label} pass on the bench`}
          className="min-h-7 whitespace-nowrap rounded-md bg-white px-2 text-xs font-medium text-slate-800 ring-1 ring-slate-300 hover:bg-slate-50"
        >
          +{label}
        </button>
      ))}
    </div>
  );
}
