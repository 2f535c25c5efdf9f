/**
 * A compact, read-only drawing of the bench at one moment of a replay: where
 * the leads and the clamp are, the key, the engine, the pile, and the meters.
 * Everything is read from the replayed model state; nothing here is a control.
 */
import type { ConnectionPoint, Conductor } from '../../../../sim/inputs.ts';
import { isScheduledActive } from '../../../../sim/car-changes.ts';
import { NO_READING, meterShows, type MeterQuantity } from '../../../../shared/meter-display.ts';
import type { ReplayFrame } from '../hooks/use-replay-player.ts';

type Pt = [number, number];

const POINTS: Record<ConnectionPoint, { at: Pt; label: string }> = {
  'battery-pos': { at: [86, 62], label: 'Batt +' },
  'battery-neg': { at: [154, 62], label: 'Batt −' },
  'jump-pos': { at: [250, 40], label: 'Jump +' },
  'jump-neg': { at: [300, 40], label: 'Jump −' },
  'alt-bplus': { at: [470, 64], label: 'B+' },
  'alt-case': { at: [548, 128], label: 'Case' },
  'engine-ground': { at: [340, 186], label: 'Block' },
  chassis: { at: [110, 190], label: 'Body' },
};

const CONDUCTORS: Record<Conductor, { from: Pt; to: Pt; label: string }> = {
  'bplus-cable': { from: [470, 64], to: [86, 62], label: 'B+ cable' },
  'battery-pos-cable': { from: [86, 62], to: [60, 120], label: 'Battery + cable' },
  'battery-neg-cable': { from: [154, 62], to: [110, 190], label: 'Battery − cable' },
  'ground-strap': { from: [110, 190], to: [340, 186], label: 'Ground strap' },
  'sense-line': { from: [86, 62], to: [500, 40], label: 'Sense line' },
};

const METER: Pt = [300, 220];
const mid = (a: Pt, b: Pt): Pt => [(a[0] + b[0]) / 2, (a[1] + b[1]) / 2];
function Readout({ label, value, testId }: { label: string; value: string; testId?: string }) {
  return (
    <div className="rounded-md bg-slate-900 px-2.5 py-1.5">
      <dt className="text-[10px] uppercase tracking-wide text-slate-400">{label}</dt>
      <dd className="font-mono text-base font-semibold text-live-300" data-testid={testId}>
        {value}
      </dd>
    </div>
  );
}

/** A readout as the bench's display showed it (shared/meter-display.ts). */
function shown(q: MeterQuantity, d: ReplayFrame['display']['readings']): string {
  const s = meterShows(q, d);
  return s ? `${s.text} ${s.unit}` : NO_READING;
}

export function ReplayBenchView({ frame, faultLabels = [], changeLabels = {} }: { frame: ReplayFrame; faultLabels?: readonly string[]; changeLabels?: Readonly<Record<string, string>> }) {
  const { controls } = frame.point;
  const r = frame.readings;
  const d = frame.display.readings;
  const timeS = frame.point.state.timeMs / 1000;
  const scheduled = new Set(Object.keys(changeLabels));
  const permanent = faultLabels.filter((l) => !Object.values(changeLabels).includes(l));
  const present = [...permanent, ...controls.changes.filter((c) => scheduled.has(c.id) && isScheduledActive(c, timeS)).map((c) => changeLabels[c.id]!)];
  const red = controls.leads.red ? POINTS[controls.leads.red] : null;
  const black = controls.leads.black ? POINTS[controls.leads.black] : null;
  const clamp = controls.clamp.conductor ? CONDUCTORS[controls.clamp.conductor] : null;
  return (
    <div className="space-y-3">
      <svg viewBox="0 0 600 250" className="w-full rounded-lg bg-stone-50 ring-1 ring-slate-200" role="img" aria-label={`Bench at this moment: red lead ${red?.label ?? 'parked'}, black lead ${black?.label ?? 'parked'}, clamp ${clamp?.label ?? 'off'}, engine ${r.engine}`}>
        <rect x={60} y={70} width={120} height={60} rx={6} className="fill-white stroke-slate-500" strokeWidth={2} />
        <text x={120} y={106} textAnchor="middle" className="fill-slate-600 text-[13px]">
          Battery
        </text>
        <circle cx={500} cy={110} r={42} className="fill-white stroke-slate-500" strokeWidth={2} />
        <text x={500} y={114} textAnchor="middle" className="fill-slate-600 text-[13px]">
          Alternator
        </text>
        <rect x={370} y={160} width={150} height={40} rx={6} className="fill-white stroke-slate-400" strokeWidth={1.5} />
        <text x={445} y={184} textAnchor="middle" className="fill-slate-500 text-[12px]">
          Engine {Math.round(r.tachRpm)} rpm
        </text>
        {(Object.keys(CONDUCTORS) as Conductor[]).map((c) => {
          const k = CONDUCTORS[c];
          return <line key={c} x1={k.from[0]} y1={k.from[1]} x2={k.to[0]} y2={k.to[1]} className={c === 'bplus-cable' && r.fusibleLinkOpen ? 'stroke-stop-600' : 'stroke-slate-300'} strokeWidth={c === 'sense-line' ? 1 : 3} strokeDasharray={c === 'bplus-cable' && r.fusibleLinkOpen ? '6 4' : undefined} />;
        })}
        {(Object.keys(POINTS) as ConnectionPoint[]).map((p) => (
          <g key={p}>
            <circle cx={POINTS[p].at[0]} cy={POINTS[p].at[1]} r={5} className="fill-white stroke-slate-600" strokeWidth={1.5} />
            <text x={POINTS[p].at[0]} y={POINTS[p].at[1] - 9} textAnchor="middle" className="fill-slate-500 text-[10px]">
              {POINTS[p].label}
            </text>
          </g>
        ))}
        <rect x={METER[0] - 34} y={METER[1] - 12} width={68} height={24} rx={4} className="fill-slate-900" />
        <text x={METER[0]} y={METER[1] + 5} textAnchor="middle" className="fill-live-300 font-mono text-[12px]">
          {shown('voltage', d)}
        </text>
        {red && <line x1={METER[0] - 12} y1={METER[1] - 12} x2={red.at[0]} y2={red.at[1]} className="stroke-stop-600" strokeWidth={2.5} />}
        {black && <line x1={METER[0] + 12} y1={METER[1] - 12} x2={black.at[0]} y2={black.at[1]} className="stroke-slate-900" strokeWidth={2.5} />}
        {clamp && (
          <g transform={`translate(${mid(clamp.from, clamp.to).join(',')})`}>
            <circle r={10} className="fill-none stroke-live-600" strokeWidth={3} />
            <text y={-14} textAnchor="middle" className="fill-live-700 text-[10px]">
              clamp
            </text>
          </g>
        )}
      </svg>
      <dl className="grid grid-cols-2 gap-2 sm:grid-cols-4" aria-live="off" data-testid="replay-readouts" data-at-ms={frame.display.atMs}>
        <Readout label="Volts" value={shown('voltage', d)} testId="replay-volts" />
        <Readout label="Ripple" value={shown('ripple', d)} testId="replay-ripple" />
        <Readout label="Clamp" value={shown('current', d)} testId="replay-amps" />
        <Readout label="Engine" value={shown('rpm', d)} testId="replay-rpm" />
        <Readout label="Draw" value={shown('draw', d)} testId="replay-draw" />
        <Readout label="Pile" value={`${r.pileA.toFixed(0)} A`} />
        <Readout label="Battery" value={`${Math.round(r.batterySoc01 * 100)} %`} />
        <Readout label="Key" value={controls.key} />
      </dl>
      <p className="text-sm text-slate-600">
        Pile dial {Math.round(controls.pileDial01 * 100)} % · held {Math.round(controls.heldRpm)} rpm
        {controls.accessoriesOn.length ? ` · on: ${controls.accessoriesOn.join(', ')}` : ''}
        {controls.ammeterInSeries ? ' · ammeter in series' : ''}
        {!controls.bplusConnected ? ' · B+ lead off' : ''}
        {r.fusibleLinkOpen ? ' · fusible link open' : ''}
      </p>
      {present.length > 0 && <p className="text-sm text-slate-600">Faults present: {present.join('; ')}</p>}
    </div>
  );
}
