/**
 * The bench at one moment of a replay: the same engine-bay drawing as the
 * live bench (where the leads and the clamp are, the link, the lamp, the
 * pile's heat) and the meters, read from the replayed model state. Nothing
 * here is a control.
 */
import { isScheduledActive } from '../../../../sim/car-changes.ts';
import type { AccessoryParams } from '../../../../sim/params.ts';
import { dialPercent } from '../../../../shared/dial.ts';
import { NO_READING, meterShows, type MeterQuantity } from '../../../../shared/meter-display.ts';
import { EngineBay, bayStateOf, type BayState } from '../../../components/schematic/engine-bay.tsx';
import type { ReplayFrame } from '../hooks/use-replay-player.ts';

const KEY_WORDS = { off: 'Off', on: 'On', start: 'Start' } as const;
const ENGINE_WORDS: Record<string, string> = { off: 'Stopped', cranking: 'Cranking', running: 'Running', stalled: 'Stalled' };

function Readout({ label, value, testId }: { label: string; value: string; testId?: string }) {
  return (
    <div className="min-w-0 rounded-md bg-slate-900 px-2.5 py-1.5">
      <dt className="truncate text-[11px] uppercase tracking-wide text-slate-300">{label}</dt>
      <dd className="truncate font-mono text-base font-semibold text-live-300" data-testid={testId}>
        {value}
      </dd>
    </div>
  );
}

/** The bench's drawing state at a frame: as on the bench, the link is drawn open once it burnt open during the attempt. */
const replayBayState = (frame: ReplayFrame): BayState => bayStateOf(frame.point.controls, frame.point.state.fusibleLinkBlown, frame.readings);

/** A readout as the bench's display showed it (shared/meter-display.ts). */
function shown(q: MeterQuantity, d: ReplayFrame['display']['readings']): string {
  const s = meterShows(q, d);
  return s ? `${s.text} ${s.unit}` : NO_READING;
}

export function ReplayBenchView({
  frame,
  accessories,
  faultLabels = [],
  changeLabels = {},
}: {
  frame: ReplayFrame;
  accessories: readonly AccessoryParams[];
  faultLabels?: readonly string[];
  changeLabels?: Readonly<Record<string, string>>;
}) {
  const { controls } = frame.point;
  const r = frame.readings;
  const d = frame.display.readings;
  const timeS = frame.point.state.timeMs / 1000;
  const scheduled = new Set(Object.keys(changeLabels));
  const permanent = faultLabels.filter((l) => !Object.values(changeLabels).includes(l));
  const present = [...permanent, ...controls.changes.filter((c) => scheduled.has(c.id) && isScheduledActive(c, timeS)).map((c) => changeLabels[c.id]!)];
  const on = controls.accessoriesOn.map((id) => accessories.find((a) => a.id === id)?.label ?? 'an accessory');
  return (
    <div className="space-y-3">
      <EngineBay state={replayBayState(frame)} accessories={accessories} className="h-auto w-full rounded-xl bg-stone-50 ring-1 ring-slate-200" />
      <dl className="grid grid-cols-2 gap-2 sm:grid-cols-4" aria-live="off" data-testid="replay-readouts" data-at-ms={frame.display.atMs}>
        <Readout label="Volts" value={shown('voltage', d)} testId="replay-volts" />
        <Readout label="Ripple" value={shown('ripple', d)} testId="replay-ripple" />
        <Readout label="Clamp" value={shown('current', d)} testId="replay-amps" />
        <Readout label="Engine" value={shown('rpm', d)} testId="replay-rpm" />
        <Readout label="Draw" value={shown('draw', d)} testId="replay-draw" />
        <Readout label="Pile" value={`${r.pileA.toFixed(0)} A`} />
        <Readout label="Battery charge" value={`${Math.round(r.batterySoc01 * 100)} %`} />
        <Readout label="Key · engine" value={`${KEY_WORDS[controls.key]} · ${ENGINE_WORDS[r.engine] ?? r.engine}`} />
      </dl>
      <p className="text-sm text-slate-700">
        Pile dial {dialPercent(controls.pileDial01)} % · assistant holds {controls.heldRpm > 0 ? `${Math.round(controls.heldRpm).toLocaleString('en-US')} rpm` : 'idle'}
        {on.length ? ` · switched on: ${on.join(', ')}` : ''}
        {controls.ammeterInSeries ? ' · series ammeter fitted' : ''}
        {!controls.bplusConnected ? ' · B+ lead off' : ''}
        {frame.point.state.fusibleLinkBlown ? ' · fusible link burnt open' : ''}
      </p>
      {present.length > 0 && <p className="text-sm text-slate-700">Faults present: {present.join('; ')}</p>}
    </div>
  );
}
