import { Button } from '../../../components/ui/button.tsx';
import { ErrorState, Panel, Spinner } from '../../../components/ui/states.tsx';
import { useClassLink } from '../api/get-class-link.ts';
import { useSyncRoster } from '../api/sync-roster.ts';

const names = (list: { name: string }[]) => list.map((p) => p.name).join(', ');

/** A class that is a course on a learning platform: where it comes from, and its roster synced from there. */
export function ClassRosterSync({ classId, onSynced }: { classId: number; onSynced?: () => void }) {
  const link = useClassLink(classId);
  const sync = useSyncRoster(classId, onSynced);
  if (link.isPending) return <Spinner label="Loading the platform link" />;
  if (link.isError) return <ErrorState error={link.error} retry={() => void link.refetch()} />;
  const l = link.data;
  if (!l.linked) return null;
  const r = sync.data;
  return (
    <Panel title={`Roster from ${l.platformName ?? 'the learning platform'}`}>
      <p className="text-sm text-slate-700">
        This class is the course “{l.contextTitle ?? 'untitled'}”.{' '}
        {l.lastSync
          ? `Last synced ${new Date(l.lastSync.at).toLocaleString()}: ${l.lastSync.added} added, ${l.lastSync.updated} updated, ${l.lastSync.gone} gone.`
          : 'Not synced yet: people join as they launch Loadline from the course.'}
      </p>
      {l.canSync ? (
        <div className="mt-3 flex flex-wrap items-center gap-3">
          <Button variant="secondary" disabled={sync.isPending} onClick={() => sync.mutate()}>
            {sync.isPending ? 'Syncing…' : 'Sync members from the platform'}
          </Button>
          <p role="status" aria-live="polite" className="text-sm">
            {sync.error && <span className="text-stop-700">{sync.error.message}</span>}
            {r && (
              <span className="text-live-700">
                {r.added.length} added{r.added.length ? ` (${names(r.added)})` : ''}, {r.updated.length} updated{r.updated.length ? ` (${names(r.updated)})` : ''}, {r.gone.length} gone
                {r.gone.length ? ` (${names(r.gone)})` : ''}, {r.unchanged} unchanged.
              </span>
            )}
          </p>
        </div>
      ) : (
        <p className="mt-2 text-sm text-slate-500">The platform does not offer this course’s roster to Loadline.</p>
      )}
      {l.gone.length > 0 && (
        <div className="mt-4">
          <h3 className="text-sm font-medium text-slate-800">No longer in the course</h3>
          <ul className="mt-1 text-sm text-slate-600">
            {l.gone.map((g) => (
              <li key={g.userId}>
                {g.name} ({g.role}) · since {new Date(g.goneAt).toLocaleDateString()}; their attempts are kept
              </li>
            ))}
          </ul>
        </div>
      )}
    </Panel>
  );
}
