/** Letting sim time pass quickly: for a rest before an open-circuit reading or for modules to sleep. */
import { MAX_ATTEMPT_MS } from '../../../../shared/api/attempts.ts';
import { Button } from '../../../components/ui/button.tsx';
import { useBench, useBenchEngine } from '../hooks/use-bench.ts';

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
    <div className="flex flex-wrap items-center gap-1.5">
      <span className="text-sm text-slate-700">Let time pass:</span>
      {[
        [10_000, '10 s'],
        [60_000, '1 min'],
        [300_000, '5 min'],
      ].map(([ms, label]) => (
        <Button key={label} variant="secondary" size="sm" onClick={() => engine.skipAhead(ms as number)} aria-label={`Let ${label} pass on the bench`}>
          +{label}
        </Button>
      ))}
    </div>
  );
}
