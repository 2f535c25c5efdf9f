/** The running attempts of a class, one card each, kept live by the board's stream. */
import { useEffect, useState } from 'react';
import { FAULT_TEXT } from '../../../../shared/fault-catalogue-text.ts';
import { BENCH_GONE_AFTER_MS, BENCH_IDLE_AFTER_MS, type BoardAttempt, type InjectionView, type LiveReadings } from '../../../../shared/api/live.ts';
import { DIAGNOSTIC_TEST_LABELS } from '../../../../shared/scenario.ts';
import { Button } from '../../../components/ui/button.tsx';
import { EmptyState } from '../../../components/ui/states.tsx';
import { useClearFault } from '../api/inject-fault.ts';
import type { StreamState } from '../hooks/use-board-stream.ts';
import { InjectForm } from './inject-form.tsx';

export function formatSimTime(ms: number): string {
  const s = Math.floor(ms / 1000);
  const h = Math.floor(s / 3600);
  const m = Math.floor((s % 3600) / 60);
  const sec = String(s % 60).padStart(2, '0');
  return h > 0 ? `${h}:${String(m).padStart(2, '0')}:${sec}` : `${m}:${sec}`;
}

const fmt = (v: number | null | undefined, digits: number, unit: string) => (v === null || v === undefined ? '—' : `${v.toFixed(digits)} ${unit}`);

function Reading({ label, value }: { label: string; value: string }) {
  return (
    <div className="min-w-0">
      <dt className="text-[11px] uppercase tracking-wide text-slate-500">{label}</dt>
      <dd className="font-mono text-sm font-semibold text-live-700">{value}</dd>
    </div>
  );
}

function injectionText(i: InjectionView): string {
  const label = i.kind ? FAULT_TEXT[i.kind].label : 'Fault';
  const parts = [label];
  if (i.severity01 !== null && i.severity01 < 1) parts.push(`${Math.round(i.severity01 * 100)} %`);
  if (i.delayS) parts.push(`after ${i.delayS} s`);
  if (i.intermittent) parts.push(`intermittent, ${i.intermittent.periodS} s period`);
  return parts.join(', ');
}

function Injections({ attempt }: { attempt: BoardAttempt }) {
  const clear = useClearFault();
  const injects = attempt.injections.filter((i) => i.type === 'inject');
  if (injects.length === 0) return null;
  return (
    <ul className="mt-3 space-y-1.5" aria-label={`Faults injected for ${attempt.studentName}`}>
      {injects.map((i) => {
        const clearRow = attempt.injections.find((c) => c.type === 'clear' && c.faultId === i.faultId);
        const status = clearRow ? (clearRow.appliedAt ? 'cleared' : 'clearing…') : i.appliedAt ? 'on the bench' : 'waiting for the bench';
        return (
          <li key={i.injectionId} className="flex items-center justify-between gap-2 rounded-md bg-stone-50 px-2 py-1 text-sm ring-1 ring-slate-200">
            <span className="min-w-0">
              <span className="font-medium text-slate-800">{injectionText(i)}</span>{' '}
              <span className={status === 'waiting for the bench' ? 'text-warn-700' : 'text-slate-500'}>· {status}</span>
            </span>
            {!clearRow && (
              <Button size="sm" variant="secondary" disabled={clear.isPending} onClick={() => clear.mutate({ attemptId: attempt.attemptId, injectionId: i.injectionId })} aria-label={`Clear ${injectionText(i)} for ${attempt.studentName}`}>
                Clear
              </Button>
            )}
          </li>
        );
      })}
    </ul>
  );
}

/** The wall clock, ticking once a second (for "last input … ago"). */
function useNow(): number {
  const [now, setNow] = useState(() => Date.now());
  useEffect(() => {
    const t = window.setInterval(() => setNow(Date.now()), 1000);
    return () => window.clearInterval(t);
  }, []);
  return now;
}

export function sinceText(iso: string | null, now: number): string {
  if (!iso) return 'no input yet';
  const s = Math.max(0, Math.round((now - Date.parse(iso)) / 1000));
  return s < 60 ? `last input ${s} s ago` : `last input ${Math.floor(s / 60)} min ago`;
}

/** Whether a bench is at work: open and reporting its clock, with input lately. */
export function benchActivity(a: Pick<BoardAttempt, 'benchSeenAt' | 'lastActivityAt' | 'startedAt'>, now: number): { idle: boolean; text: string } {
  const seen = a.benchSeenAt ? now - Date.parse(a.benchSeenAt) : null;
  const lastInput = Date.parse(a.lastActivityAt ?? a.startedAt);
  if (seen === null || seen > BENCH_GONE_AFTER_MS) return { idle: true, text: 'Idle: the bench is closed or out of sight' };
  const quiet = now - lastInput;
  if (quiet > BENCH_IDLE_AFTER_MS) return { idle: true, text: `Idle: no input for ${Math.floor(quiet / 60_000)} min` };
  return { idle: false, text: 'At work' };
}

/** What needs the instructor's eye on a bench: a cut-out or hot pile, a burnt link. Red for the stops, amber for the warning. */
export function benchAlerts(r: LiveReadings | null): { text: string; stop: boolean }[] {
  if (!r) return [];
  const alerts: { text: string; stop: boolean }[] = [];
  if (r.pileOverheated) alerts.push({ text: 'Pile overheated and cut out', stop: true });
  else if (r.pileHot) alerts.push({ text: 'Pile hot', stop: false });
  if (r.linkBlown) alerts.push({ text: 'Fusible link burnt open', stop: true });
  return alerts;
}

function AttemptCard({ attempt }: { attempt: BoardAttempt }) {
  const [injecting, setInjecting] = useState(false);
  const now = useNow();
  const r = attempt.readings;
  const activity = benchActivity(attempt, now);
  const alerts = benchAlerts(r);
  return (
    <li
      className={`rounded-xl p-4 shadow-sm ring-1 ${activity.idle ? 'bg-stone-50 ring-slate-200' : 'bg-white ring-slate-200'} ${alerts.some((a) => a.stop) ? 'ring-2 ring-stop-600' : alerts.length ? 'ring-2 ring-warn-500' : ''}`}
      aria-label={`${attempt.studentName}, ${attempt.scenarioTitle}`}
      data-idle={activity.idle}
    >
      <div className="flex items-start justify-between gap-3">
        <div className="min-w-0">
          <p className="font-semibold text-slate-900">{attempt.studentName}</p>
          <p className="truncate text-sm text-slate-600">
            {attempt.scenarioTitle}
            {attempt.assignmentTitle ? ` · ${attempt.assignmentTitle}` : ' · practice'}
          </p>
        </div>
        <div className="text-right">
          <p className="font-mono text-lg font-semibold text-live-700" aria-label="Elapsed bench time">
            {formatSimTime(attempt.simTimeMs)}
          </p>
          <p className="text-xs text-slate-600">{attempt.currentTest ? DIAGNOSTIC_TEST_LABELS[attempt.currentTest] : 'Setting up'}</p>
          <p className="text-xs text-slate-600">{sinceText(attempt.lastActivityAt, now)}</p>
        </div>
      </div>
      <div className="mt-2 flex flex-wrap gap-1.5 text-xs font-medium">
        <span data-testid="bench-activity" className={`rounded-full px-2 py-0.5 ring-1 ${activity.idle ? 'bg-stone-100 text-slate-700 ring-slate-300' : 'bg-live-50 text-live-700 ring-live-500/40'}`}>
          {activity.text}
        </span>
        {alerts.map((a) => (
          <span key={a.text} role="alert" className={`rounded-full px-2 py-0.5 ${a.stop ? 'bg-stop-600 text-white' : 'bg-warn-100 text-warn-700 ring-1 ring-warn-500/40'}`}>
            {a.text}
          </span>
        ))}
      </div>
      <dl className="mt-3 grid grid-cols-3 gap-2 sm:grid-cols-6" aria-label={`Meters of ${attempt.studentName}'s bench now`}>
        <Reading label="Volts" value={fmt(r?.voltmeterV, 2, 'V')} />
        <Reading label="Ripple" value={r?.rippleVac === null || r?.rippleVac === undefined ? '—' : `${Math.round(r.rippleVac * 1000)} mV`} />
        <Reading label="Clamp" value={fmt(r?.clampA, 1, 'A')} />
        <Reading label="Engine" value={r ? `${(Math.round(r.tachRpm / 10) * 10).toLocaleString('en-US')} rpm` : '—'} />
        <Reading label="Pile" value={r ? `${Math.round(r.pileA)} A` : '—'} />
        <Reading label="Charge" value={r ? `${Math.round(r.batterySoc01 * 100)} %` : '—'} />
      </dl>
      <Injections attempt={attempt} />
      {injecting ? (
        <InjectForm attemptId={attempt.attemptId} studentName={attempt.studentName} onDone={() => setInjecting(false)} />
      ) : (
        <div className="mt-3">
          <Button size="sm" onClick={() => setInjecting(true)} aria-label={`Inject a fault for ${attempt.studentName}`}>
            Inject a fault
          </Button>
        </div>
      )}
    </li>
  );
}

const STREAM_TEXT: Record<StreamState, string> = { connecting: 'Connecting…', live: 'Live', reconnecting: 'Reconnecting…' };

export function StreamBadge({ state }: { state: StreamState }) {
  return (
    <span role="status" className={`inline-flex items-center gap-1.5 rounded-full px-2.5 py-1 text-xs font-medium ${state === 'live' ? 'bg-live-50 text-live-700' : 'bg-warn-100 text-warn-700'}`}>
      <span aria-hidden="true" className={`h-2 w-2 rounded-full ${state === 'live' ? 'bg-live-500' : 'bg-warn-500'}`} />
      {STREAM_TEXT[state]}
    </span>
  );
}

export function LiveBoard({ attempts }: { attempts: readonly BoardAttempt[] }) {
  if (attempts.length === 0) return <EmptyState title="Nobody is at a bench right now">Running attempts appear here as students start them.</EmptyState>;
  const attention = attempts.flatMap((a) => benchAlerts(a.readings).map((alert) => ({ who: a.studentName, ...alert })));
  return (
    <div className="space-y-4">
      {attention.length > 0 && (
        <section aria-labelledby="attention-heading" className="rounded-xl bg-warn-100 p-3 text-sm text-warn-700 ring-1 ring-warn-500/40">
          <h2 id="attention-heading" className="font-semibold">
            Needs your eye
          </h2>
          <ul className="mt-1 list-disc pl-5">
            {attention.map((a) => (
              <li key={`${a.who}-${a.text}`}>
                {a.who}: {a.text.toLowerCase()}
              </li>
            ))}
          </ul>
        </section>
      )}
      <ul className="grid gap-4 lg:grid-cols-2" aria-label="Running attempts">
        {attempts.map((a) => (
          <AttemptCard key={a.attemptId} attempt={a} />
        ))}
      </ul>
    </div>
  );
}
