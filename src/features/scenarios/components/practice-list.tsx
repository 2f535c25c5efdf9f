import type { PracticeScenario } from '../../../../shared/api/scenarios.ts';
import { DIFFICULTY_LABELS } from '../../../../shared/scenario.ts';
import { Button } from '../../../components/ui/button.tsx';
import { EmptyState } from '../../../components/ui/states.tsx';

/** Published scenarios a student may practise on: title, complaint and vehicle only. */
export function PracticeList({ scenarios, onPractise }: { scenarios: PracticeScenario[]; onPractise: (scenarioId: number) => void }) {
  if (scenarios.length === 0) return <EmptyState title="No practice scenarios are published yet" />;
  return (
    <ul className="divide-y divide-slate-100 rounded-xl bg-white shadow-sm ring-1 ring-slate-200" aria-label="Practice scenarios">
      {scenarios.map((s) => (
        <li key={s.id} className="flex items-center gap-4 px-4 py-3">
          <div className="min-w-0 flex-1">
            <p className="font-medium text-slate-900">{s.title}</p>
            <p className="truncate text-xs text-slate-500">
              {s.vehicleName} · {DIFFICULTY_LABELS[s.difficulty]} · {s.summary}
            </p>
          </div>
          <Button size="sm" variant="secondary" onClick={() => onPractise(s.id)}>
            Practice<span className="sr-only"> {s.title}</span>
          </Button>
        </li>
      ))}
    </ul>
  );
}
