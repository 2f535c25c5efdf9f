import { useState } from 'react';
import { Link } from 'react-router-dom';
import { paths } from '../../config/paths.ts';
import { EmptyState, ErrorState, PageHeader, Spinner } from '../../components/ui/states.tsx';
import { scenariosQueryOptions, useScenarios } from '../../features/scenarios/api/get-scenarios.ts';
import { ImportScenarioButton } from '../../features/scenarios/components/import-scenario-button.tsx';
import { ScenarioTable } from '../../features/scenarios/components/scenario-table.tsx';
import { queryClient } from '../../lib/query-client.ts';

export async function scenariosLoader() {
  await queryClient.ensureQueryData(scenariosQueryOptions(false));
  return null;
}

export function ScenariosPage() {
  const [showArchived, setShowArchived] = useState(false);
  const list = useScenarios(showArchived);
  return (
    <>
      <PageHeader
        title="Scenario library"
        description="Fault scenarios on invented vehicles. Shared scenarios are visible to every instructor; duplicate one to adapt it. Each save is a new version; students get the published one."
        actions={
          <>
            <ImportScenarioButton />
            <Link to={paths.scenarioNew.href()} className="inline-flex items-center rounded-md bg-slate-900 px-3.5 py-2 text-sm font-medium text-white hover:bg-slate-700">
              New scenario
            </Link>
          </>
        }
      />
      <label className="mb-3 inline-flex items-center gap-2 text-sm text-slate-700">
        <input type="checkbox" checked={showArchived} onChange={(e) => setShowArchived(e.target.checked)} />
        Show archived scenarios
      </label>
      {list.isPending ? (
        <Spinner label="Loading the library" />
      ) : list.isError ? (
        <ErrorState error={list.error} retry={() => void list.refetch()} />
      ) : list.data.length === 0 ? (
        <EmptyState title="The library is empty">Create a scenario or import a file.</EmptyState>
      ) : (
        <ScenarioTable scenarios={list.data} />
      )}
    </>
  );
}
