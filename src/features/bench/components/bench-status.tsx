/**
 * What the model says has happened to the car: engine state, the charge
 * lamp, an open fusible link, a hot or cut-out pile, a battery running down.
 */
import { shallowEqual, useBench } from '../hooks/use-bench.ts';

import type { Readings } from '../../../../sim/instruments.ts';
import type { EngineStopCause } from '../../../../sim/step.ts';

type StatusReadings = Pick<
  Readings,
  'engine' | 'engineStopCause' | 'ammeterFuseBlown' | 'ammeterOverRange' | 'beltSquealing' | 'batteryGassing' | 'chargeWarning' | 'pileOverheated' | 'pileHot' | 'voltmeterV' | 'batterySoc01'
>;

const selectStatus = (s: { linkBlownHere: boolean; readings: StatusReadings; controls: { key: string; ammeterInSeries: boolean }; timeMs: number }) => ({
  engine: s.readings.engine,
  cause: s.readings.engineStopCause,
  fuse: s.readings.ammeterFuseBlown && s.controls.ammeterInSeries,
  overRange: s.readings.ammeterOverRange,
  squeal: s.readings.beltSquealing,
  gassing: s.readings.batteryGassing,
  lamp: s.readings.chargeWarning,
  link: s.linkBlownHere,
  over: s.readings.pileOverheated,
  hot: s.readings.pileHot,
  key: s.controls.key,
  low: s.readings.batterySoc01 < 0.25,
  minutes: Math.floor(s.timeMs / 60_000),
  seconds: Math.floor((s.timeMs % 60_000) / 1000),
});

const ENGINE_WORDS: Record<string, string> = { off: 'Engine stopped', cranking: 'Cranking', running: 'Engine running', stalled: 'Engine stalled' };

/** What stopped the engine, in the words a technician would use, with what to check. */
export const STOP_CAUSE_WORDS: Readonly<Record<EngineStopCause, string>> = {
  'starter-circuit-open':
    'The starter gets no current: the battery circuit is open. If the series ammeter is fitted, its fuse has blown — cranking through the ammeter is more than its 10 A range takes.',
  'starter-voltage-low': 'The starter gets too little voltage to turn the engine fast enough: check the battery’s charge and the cable connections (voltage drop while cranking).',
  'supply-lost': 'The engine died: its supply voltage collapsed.',
};

export function BenchStatus() {
  const s = useBench(selectStatus, shallowEqual);
  return (
    <div className="flex flex-wrap items-center gap-2 text-xs font-medium">
      <span className="rounded-full bg-white px-2.5 py-1 text-slate-700 ring-1 ring-slate-200">
        {ENGINE_WORDS[s.engine] ?? s.engine}
      </span>
      <span className={`rounded-full px-2.5 py-1 ring-1 ${s.lamp ? 'bg-warn-100 text-warn-700 ring-warn-500/40' : 'bg-white text-slate-500 ring-slate-200'}`}>
        Charge lamp {s.lamp ? 'on' : 'off'}
      </span>
      <span className="rounded-full bg-white px-2.5 py-1 font-mono text-slate-500 ring-1 ring-slate-200" aria-label={`Bench time ${s.minutes} minutes ${s.seconds} seconds`}>
        {String(s.minutes).padStart(2, '0')}:{String(s.seconds).padStart(2, '0')}
      </span>
      {s.link && (
        <span role="alert" className="rounded-full bg-warn-100 px-2.5 py-1 text-warn-700 ring-1 ring-warn-500/40">
          The fusible link has burnt open: the load was held over its rating too long. The alternator no longer reaches the battery.
        </span>
      )}
      {s.engine === 'stalled' && s.cause && (
        <span role="alert" className="rounded-full bg-warn-100 px-2.5 py-1 text-warn-700 ring-1 ring-warn-500/40">
          {STOP_CAUSE_WORDS[s.cause]} Turn the key off before trying again.
        </span>
      )}
      {s.fuse && (
        <span role="alert" className="rounded-full bg-warn-100 px-2.5 py-1 text-warn-700 ring-1 ring-warn-500/40">
          The series ammeter’s fuse has blown: it reads nothing and the battery circuit is open until you fit a new fuse.
        </span>
      )}
      {s.overRange && !s.fuse && (
        <span role="alert" className="rounded-full bg-warn-100 px-2.5 py-1 text-warn-700 ring-1 ring-warn-500/40">
          The series ammeter is over its 10 A range: its fuse is about to blow.
        </span>
      )}
      {s.squeal && (
        <span className="rounded-full bg-warn-100 px-2.5 py-1 text-warn-700 ring-1 ring-warn-500/40">
          The belt squeals: it is slipping under this load.
        </span>
      )}
      {s.gassing && (
        <span role="alert" className="rounded-full bg-warn-100 px-2.5 py-1 text-warn-700 ring-1 ring-warn-500/40">
          The battery is gassing (overcharged): hydrogen and oxygen can explode — keep sparks and flames away and ventilate.
        </span>
      )}
      {s.key !== 'off' && s.engine !== 'running' && s.engine !== 'cranking' && (
        <span className="rounded-full bg-warn-100 px-2.5 py-1 text-warn-700 ring-1 ring-warn-500/40">
          Key on, engine stopped: the battery is running down{s.low ? ' and is nearly flat' : ''}
        </span>
      )}
      {s.over && (
        <span role="alert" className="rounded-full bg-stop-600 px-2.5 py-1 text-white">
          Stop: carbon pile overheated
        </span>
      )}
    </div>
  );
}
