import type { ScenarioDetail } from '../../../../shared/api/scenarios.ts';
import { Button } from '../../../components/ui/button.tsx';
import { scenarioExportHref, usePublishScenarioVersion, useRestoreScenarioVersion } from '../api/scenario-versions.ts';

/** Every version of a scenario, newest first: publish one, restore an old one as a new version, export any. */
export function VersionsPanel({ scenario }: { scenario: ScenarioDetail }) {
  const publish = usePublishScenarioVersion();
  const restore = useRestoreScenarioVersion();
  const error = publish.error ?? restore.error;
  return (
    <div className="space-y-2">
      <ol className="divide-y divide-slate-100" aria-label="Versions">
        {scenario.versions.map((v) => (
          <li key={v.id} className="py-2.5">
            <div className="flex items-baseline justify-between gap-2">
              <span className="font-medium text-slate-900">Version {v.version}</span>
              {v.published && <span className="rounded bg-live-50 px-1.5 py-0.5 text-xs font-medium text-live-700 ring-1 ring-live-100">Published</span>}
            </div>
            <p className="text-xs text-slate-500">
              {new Date(v.createdAt).toLocaleString()}
              {v.createdBy ? ` · ${v.createdBy.name}` : ''}
            </p>
            {v.note && <p className="mt-0.5 text-xs text-slate-600">{v.note}</p>}
            <div className="mt-1.5 flex flex-wrap gap-1.5">
              {scenario.canEdit && !v.published && (
                <Button size="sm" variant="secondary" disabled={publish.isPending} onClick={() => publish.mutate({ id: scenario.id, versionId: v.id })}>
                  Publish<span className="sr-only"> version {v.version}</span>
                </Button>
              )}
              {scenario.canEdit && v.version !== scenario.latestVersion && (
                <Button size="sm" variant="ghost" disabled={restore.isPending} onClick={() => restore.mutate({ id: scenario.id, versionId: v.id })}>
                  Restore<span className="sr-only"> version {v.version}</span>
                </Button>
              )}
              <a href={scenarioExportHref(scenario.id, v.version)} download className="rounded-md px-2.5 py-1 text-sm font-medium text-slate-700 hover:bg-slate-200/70">
                Export<span className="sr-only"> version {v.version}</span> JSON
              </a>
            </div>
          </li>
        ))}
      </ol>
      {error && (
        <p role="alert" className="text-sm text-stop-700">
          {error.message}
        </p>
      )}
    </div>
  );
}
