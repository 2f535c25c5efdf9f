/** /attempts/:attemptId/replay — a submitted attempt replayed read-only, with markers and comments. `?at=` opens at a moment (ms). */
import { useParams, useSearchParams } from 'react-router-dom';
import type { ReplayResponse } from '../../../shared/api/replay.ts';
import { shownWithUnit } from '../../../shared/meter-display.ts';
import { DIAGNOSTIC_TEST_LABELS } from '../../../shared/scenario.ts';
import { ErrorState, PageHeader, Panel, Spinner } from '../../components/ui/states.tsx';
import { useMe } from '../../features/auth/api/get-me.ts';
import { useReplay } from '../../features/replay/api/get-replay.ts';
import { paths } from '../../config/paths.ts';
import { ReplayBenchView } from '../../features/replay/components/replay-bench-view.tsx';
import { ReplayComments } from '../../features/replay/components/replay-comments.tsx';
import { ReplayControls } from '../../features/replay/components/replay-controls.tsx';
import { useReplayPlayer } from '../../features/replay/hooks/use-replay-player.ts';

function Player({ replay, initialMs }: { replay: ReplayResponse; initialMs: number }) {
  const a = replay.attempt;
  const player = useReplayPlayer(replay.car.params, a.seed, replay.events, a.durationMs, initialMs, replay.car.changes);
  return (
    <>
      <PageHeader
        title={`Replay: ${a.scenarioTitle}`}
        description={`${a.studentName}${a.assignmentTitle ? ` · ${a.assignmentTitle}` : ' · practice'}${a.grade !== null ? ` · grade ${Math.round(a.grade)}` : ''}${
          a.resultsAt ? ` · results show when the assignment closes, ${new Date(a.resultsAt).toLocaleString('en-GB', { dateStyle: 'medium', timeStyle: 'short' })}` : ''
        }. The bench re-run from the stored events as the server graded it; nothing here changes the attempt.`}
      />
      <div className="grid gap-6 lg:grid-cols-[minmax(0,2fr)_minmax(0,1fr)]">
        <div className="space-y-4">
          <Panel>
            <ReplayBenchView frame={player.frame} accessories={replay.car.params.loads.accessories} faultLabels={replay.faultLabels} changeLabels={replay.changeLabels} />
          </Panel>
          <Panel>
            <ReplayControls player={player} markers={replay.markers} comments={replay.comments} />
          </Panel>
        </div>
        <div className="space-y-4">
          <Panel title="Comments">
            <ReplayComments attemptId={a.id} comments={replay.comments} canComment={replay.canComment} timeMs={player.timeMs} onJump={player.seek} />
          </Panel>
          {replay.readings.length > 0 && (
            <Panel title="Readings recorded">
              <ul className="space-y-2 text-sm">
                {replay.readings.map((r) => (
                  <li key={r.id} data-testid="replay-reading" data-at-ms={r.atMs}>
                    <button type="button" onClick={() => player.seek(r.atMs)} className="text-left hover:underline">
                      <span className="font-mono text-live-700" data-testid="replay-reading-value">
                        {shownWithUnit(r.value, r.unit)}
                      </span>{' '}
                      <span className="text-slate-700">{DIAGNOSTIC_TEST_LABELS[r.test]}</span>
                      {r.where && <span className="block text-xs text-slate-600">{r.where}</span>}
                    </button>
                    <p className="text-xs text-slate-500">
                      <span
                        className={`mr-1 inline-block rounded px-1 py-0.5 font-semibold ${r.evidence ? 'bg-live-50 text-live-700' : r.evidence === false || !r.inSetup ? 'bg-warn-100 text-warn-700' : 'bg-slate-100 text-slate-600'}`}
                        data-testid="replay-reading-verdict"
                      >
                        {r.evidence ? 'Evidence' : r.evidence === false || !r.inSetup ? 'Not evidence' : 'Inside the set-up'}
                      </span>
                      {r.reason}
                    </p>
                  </li>
                ))}
              </ul>
            </Panel>
          )}
        </div>
      </div>
    </>
  );
}

export function ReplayPage() {
  const attemptId = Number(useParams().attemptId);
  const [search] = useSearchParams();
  const at = Number(search.get('at') ?? 0);
  const q = useReplay(attemptId);
  const role = useMe().data?.user?.role;
  if (q.isPending) return <Spinner label="Loading the replay" />;
  if (q.isError) return <ErrorState error={q.error} retry={() => void q.refetch()} what="attempt" back={role === 'student' ? { to: paths.attempts.href(), label: 'Back to my attempts' } : { to: paths.classes.href(), label: 'Back to the classes' }} />;
  return <Player replay={q.data} initialMs={Number.isFinite(at) ? at : 0} />;
}

export const Component = ReplayPage;
