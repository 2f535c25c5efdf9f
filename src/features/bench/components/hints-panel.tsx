/**
 * The scenario's hints, one at a time on request. Each says beforehand what
 * it costs an assigned attempt (the scenario's points per hint); once opened
 * it stays open, and the instructor sees when it was asked for.
 */
import { useSyncExternalStore } from 'react';
import { Button } from '../../../components/ui/button.tsx';
import type { HintsLog } from '../hooks/hints-log.ts';

export function HintsPanel({ hints, pointsEach, graded, log }: { hints: readonly string[]; pointsEach: number; graded: boolean; log: HintsLog }) {
  const opened = useSyncExternalStore(log.subscribe, log.opened, log.opened);
  if (hints.length === 0) return null;
  const next = hints.findIndex((_, i) => !opened.includes(i));
  const cost = !graded ? 'not graded here' : pointsEach > 0 ? `each costs ${pointsEach} point${pointsEach === 1 ? '' : 's'} of the grade` : 'free';
  return (
    <section aria-labelledby="hints-heading" className="space-y-2 rounded-md bg-stone-50 p-3 ring-1 ring-slate-200" data-testid="hints">
      <h4 id="hints-heading" className="text-sm font-semibold text-slate-900">
        Hints <span className="font-normal text-slate-600">({opened.length} of {hints.length} opened; {cost})</span>
      </h4>
      {opened.length > 0 && (
        <ol className="list-decimal space-y-1 pl-5 text-slate-700" aria-label="Hints opened">
          {opened.map((i) => (
            <li key={i} data-testid="hint-text">
              {hints[i]}
            </li>
          ))}
        </ol>
      )}
      {next >= 0 && (
        <Button variant="secondary" size="sm" onClick={() => log.open(next)} data-testid="hint-button">
          {opened.length === 0 ? 'Show a hint' : 'Show another hint'}
          {graded && pointsEach > 0 ? ` (−${pointsEach})` : ''}
        </Button>
      )}
      <p className="text-xs text-slate-600">Your instructor sees which hints you opened and when.</p>
    </section>
  );
}
