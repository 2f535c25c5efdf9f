import { useMemo } from 'react';
import { Link, useNavigate, useParams, type LoaderFunctionArgs } from 'react-router-dom';
import { FAULT_TEXT } from '../../../shared/fault-catalogue-text.ts';
import { blankScenario } from '../../../shared/scenario.ts';
import { paths } from '../../config/paths.ts';
import { Button } from '../../components/ui/button.tsx';
import { ErrorState, PageHeader, Panel, Spinner } from '../../components/ui/states.tsx';
import { useDuplicateScenario } from '../../features/scenarios/api/duplicate-scenario.ts';
import { scenarioQueryOptions, useScenario } from '../../features/scenarios/api/get-scenario.ts';
import { useCreateScenario, useUpdateScenario } from '../../features/scenarios/api/save-scenario.ts';
import { scenarioExportHref, usePatchScenario } from '../../features/scenarios/api/scenario-versions.ts';
import { ScenarioEditor } from '../../features/scenarios/components/scenario-editor.tsx';
import { VersionsPanel } from '../../features/scenarios/components/versions-panel.tsx';
import { queryClient } from '../../lib/query-client.ts';

export async function scenarioLoader({ params }: LoaderFunctionArgs) {
  const id = Number(params.scenarioId);
  if (Number.isInteger(id) && id > 0) await queryClient.ensureQueryData(scenarioQueryOptions(id)).catch(() => null);
  return null;
}

export function NewScenarioPage() {
  const create = useCreateScenario();
  const navigate = useNavigate();
  const initial = useMemo(() => blankScenario(), []);
  return (
    <>
      <PageHeader title="New scenario" description="Build the vehicle, set the faults and the pass rules, and watch the model’s output curve as you go." />
      <ScenarioEditor
        initial={initial}
        mode="create"
        readOnly={false}
        saving={create.isPending}
        saveError={create.error}
        onSave={({ definition, note, visibility }) =>
          create.mutate({ definition, note, visibility }, { onSuccess: (d) => void navigate(paths.scenario.href(d.id), { replace: true }) })
        }
      />
    </>
  );
}

export function EditScenarioPage() {
  const id = Number(useParams().scenarioId);
  const scenario = useScenario(id);
  const update = useUpdateScenario();
  const duplicate = useDuplicateScenario();
  const patch = usePatchScenario();
  const navigate = useNavigate();
  if (scenario.isPending) return <Spinner label="Loading the scenario" />;
  if (scenario.isError) return <ErrorState error={scenario.error} retry={() => void scenario.refetch()} what="scenario" back={{ to: paths.scenarios.href(), label: 'Back to the library' }} />;
  const s = scenario.data;
  const faults = s.definition.faults.map((f) => FAULT_TEXT[f.kind].label);
  return (
    <>
      <PageHeader
        title={s.definition.title}
        description={
          <>
            Version {s.latestVersion}
            {s.owner ? ` · ${s.owner.name}` : ''} · {s.visibility === 'private' ? 'Private' : 'Shared'} · {faults.length ? faults.join(', ') : 'Healthy control'}
          </>
        }
        actions={
          <>
            <Link to={paths.scenarios.href()} className="rounded-md px-3.5 py-2 text-sm font-medium text-slate-700 hover:bg-slate-200/70">
              Back to the library
            </Link>
            <Link
              to={paths.scenarioTry.href(s.id)}
              className="rounded-md bg-slate-900 px-3.5 py-2 text-sm font-medium text-white hover:bg-slate-700"
              title="Runs the latest saved version; save your changes first"
            >
              Try on the bench
            </Link>
            <a href={scenarioExportHref(s.id)} download className="rounded-md bg-white px-3.5 py-2 text-sm font-medium text-slate-900 ring-1 ring-slate-300 hover:bg-slate-50">
              Export JSON
            </a>
            <Button variant="secondary" disabled={duplicate.isPending} onClick={() => duplicate.mutate(s.id, { onSuccess: (d) => void navigate(paths.scenario.href(d.id)) })}>
              Duplicate
            </Button>
          </>
        }
      />
      <div className="grid gap-6 xl:grid-cols-[1fr_18rem]">
        <div className="min-w-0">
          {!s.canEdit && (
            <p className="mb-4 rounded-lg bg-warn-100 px-4 py-3 text-sm text-warn-700">
              This scenario belongs to {s.owner?.name ?? 'someone else'}. You can read and assign it; duplicate it to make your own version.
            </p>
          )}
          <ScenarioEditor
            initial={s.definition}
            mode="edit"
            readOnly={!s.canEdit}
            saving={update.isPending}
            saveError={update.error}
            onSave={({ definition, note }) => update.mutate({ id: s.id, definition, note, baseVersion: s.latestVersion })}
          />
        </div>
        <aside className="space-y-4">
          <Panel title="Versions">
            <VersionsPanel scenario={s} />
          </Panel>
          {s.canEdit && (
            <Panel title="Visibility">
              <p className="text-sm text-slate-600">{s.visibility === 'private' ? 'Only you can see this scenario.' : 'Every instructor can see and assign this scenario.'}</p>
              <Button className="mt-2" size="sm" variant="secondary" disabled={patch.isPending} onClick={() => patch.mutate({ id: s.id, visibility: s.visibility === 'private' ? 'shared' : 'private' })}>
                {s.visibility === 'private' ? 'Share with instructors' : 'Make private'}
              </Button>
              <p className="mt-4 text-sm text-slate-600">
                {s.archived ? 'Archived: hidden from the library and from practice.' : 'Archiving hides it from the library and from practice; assignments keep their version.'}
              </p>
              <Button className="mt-2" size="sm" variant="ghost" disabled={patch.isPending} onClick={() => patch.mutate({ id: s.id, archived: !s.archived })}>
                {s.archived ? 'Bring back from the archive' : 'Archive'}
              </Button>
              {patch.error && (
                <p role="alert" className="mt-2 text-sm text-stop-700">
                  {patch.error.message}
                </p>
              )}
            </Panel>
          )}
        </aside>
      </div>
    </>
  );
}
