/**
 * The bench at one moment of a replay: the same engine-bay drawing as the
 * live bench (where the leads and the clamp are, the link, the lamp, the
 * pile's heat) and the meters, read from the replayed model state. Nothing
 * here is a control.
 */
import { FAULT_CATALOG } from '../../../../sim/faults.ts';
import type { AccessoryParams } from '../../../../sim/params.ts';
import { EngineBay, type BayState } from '../../../components/schematic/engine-bay.tsx';
import type { ReplayFrame } from '../hooks/use-replay-player.ts';

const fmt = (v: number | null, digits: number, unit: string) => (v === null ? '—' : `${v.toFixed(digits)} ${unit}`);
const KEY_WORDS = { off: 'Off', on: 'On', start: 'Start' } as const;
const ENGINE_WORDS: Record<string, string> = { off: 'Stopped', cranking: 'Cranking', running: 'Running', stalled: 'Stalled' };

function Readout({ label, value }: { label: string; value: string }) {
  return (
    <div className="min-w-0 rounded-md bg-slate-900 px-2.5 py-1.5">
      <dt className="truncate text-[11px] uppercase tracking-wide text-slate-300">{label}</dt>
      <dd className="truncate font-mono text-base font-semibold text-live-300">{value}</dd>
    </div>
  );
}

export function bayStateOf(frame: ReplayFrame): BayState {
  const c = frame.point.controls;
  return {
    red: c.leads.red,
    black: c.leads.black,
    conductor: c.clamp.conductor,
    arrow: c.clamp.arrow,
    ammeter: c.ammeterInSeries,
    bplus: c.bplusConnected,
    accessoriesOn: c.accessoriesOn.join(','),
    // As on the bench: the link is drawn open once it burnt open during the attempt.
    linkOpen: frame.point.state.fusibleLinkBlown,
    lamp: frame.readings.chargeWarning,
    pileHot: frame.readings.pileHot,
    pileOver: frame.readings.pileOverheated,
  };
}

export function ReplayBenchView({ frame, accessories, showFaults }: { frame: ReplayFrame; accessories: readonly AccessoryParams[]; showFaults: boolean }) {
  const { controls } = frame.point;
  const r = frame.readings;
  const activeFaults = controls.faults.filter((f) => frame.point.state.timeMs / 1000 >= f.onsetS);
  const on = controls.accessoriesOn.map((id) => accessories.find((a) => a.id === id)?.label ?? 'an accessory');
  return (
    <div className="space-y-3">
      <EngineBay state={bayStateOf(frame)} accessories={accessories} className="h-auto w-full rounded-lg bg-stone-50 ring-1 ring-slate-200" />
      <dl className="grid grid-cols-2 gap-2 sm:grid-cols-4" aria-live="off">
        <Readout label="Volts" value={fmt(r.voltmeterV, 2, 'V')} />
        <Readout label="Ripple" value={r.rippleVac === null ? '—' : `${Math.round(r.rippleVac * 1000)} mV AC`} />
        <Readout label="Clamp" value={fmt(r.clampA, 1, 'A')} />
        <Readout label="Engine" value={`${Math.round(r.tachRpm / 10) * 10} rpm`} />
        <Readout label="Draw" value={r.ammeterA === null ? '—' : `${Math.round(r.ammeterA * 1000)} mA`} />
        <Readout label="Pile" value={`${r.pileA.toFixed(0)} A`} />
        <Readout label="Battery charge" value={`${Math.round(r.batterySoc01 * 100)} %`} />
        <Readout label="Key · engine" value={`${KEY_WORDS[controls.key]} · ${ENGINE_WORDS[r.engine] ?? r.engine}`} />
      </dl>
      <p className="text-sm text-slate-700">
        Pile dial {Math.round(controls.pileDial01 * 100)} % · assistant holds {controls.heldRpm > 0 ? `${Math.round(controls.heldRpm).toLocaleString('en-US')} rpm` : 'idle'}
        {on.length ? ` · switched on: ${on.join(', ')}` : ''}
        {controls.ammeterInSeries ? ' · series ammeter fitted' : ''}
        {!controls.bplusConnected ? ' · B+ lead off' : ''}
        {showFaults && r.fusibleLinkOpen ? ' · fusible link open' : ''}
      </p>
      {showFaults && activeFaults.length > 0 && <p className="text-sm text-slate-700">Faults present: {activeFaults.map((f) => FAULT_CATALOG[f.kind].label).join('; ')}</p>}
    </div>
  );
}
