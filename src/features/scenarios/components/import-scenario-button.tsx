import { useRef } from 'react';
import { useNavigate } from 'react-router-dom';
import { scenarioFieldInWords } from '../../../../shared/scenario.ts';
import { ApiError } from '../../../lib/api-client.ts';
import { Button } from '../../../components/ui/button.tsx';
import { useImportScenario } from '../api/import-scenario.ts';

/** Picks a scenario file and imports it as a new private scenario; a bad file lists each bad path. */
export function ImportScenarioButton() {
  const input = useRef<HTMLInputElement>(null);
  const importer = useImportScenario();
  const navigate = useNavigate();
  const err = importer.error;
  return (
    <div className="relative">
      <input
        ref={input}
        type="file"
        accept=".json,application/json"
        className="sr-only"
        tabIndex={-1}
        aria-label="Scenario file to import"
        data-testid="import-scenario-file"
        onChange={(e) => {
          const file = e.target.files?.[0];
          e.target.value = '';
          if (file) importer.mutate({ file, visibility: 'private' }, { onSuccess: (d) => void navigate(`/scenarios/${d.id}`) });
        }}
      />
      <Button variant="secondary" onClick={() => input.current?.click()} disabled={importer.isPending}>
        {importer.isPending ? 'Importing…' : 'Import JSON'}
      </Button>
      {err && (
        <div role="alert" className="absolute right-0 z-10 mt-2 w-[min(24rem,calc(100vw-2rem))] rounded-lg bg-white p-3 text-sm shadow-lg ring-1 ring-stop-600/30">
          <p className="font-medium text-stop-700">Nothing was imported</p>
          {err instanceof ApiError && err.issues?.length ? (
            <ul className="mt-1 max-h-60 list-disc space-y-0.5 overflow-auto pl-5 text-xs text-slate-700">
              {err.issues.map((i) => (
                <li key={`${i.path}:${i.message}`}>
                  <span className="font-medium text-slate-900">{scenarioFieldInWords(i.path)}</span>: {i.message}
                </li>
              ))}
            </ul>
          ) : (
            <p className="mt-1 text-xs text-slate-700">{err.message}</p>
          )}
          <button type="button" className="mt-2 text-xs font-medium underline" onClick={() => importer.reset()}>
            Dismiss
          </button>
        </div>
      )}
    </div>
  );
}
