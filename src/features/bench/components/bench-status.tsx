/**
 * What the model says has happened to the car: the engine and the charge
 * lamp as small chips, and what needs the student's attention (an open
 * fusible link, a cut-out pile, a stalled engine and why, the series
 * ammeter's fuse, a slipping belt, a gassing battery, a battery running down,
 * the B+ lead off with the engine running) as notices over the drawing.
 */
import type { BenchSnapshot } from '../stores/bench-engine.ts';
import { shallowEqual, useBench } from '../hooks/use-bench.ts';

import type { EngineStopCause } from '../../../../sim/step.ts';

const selectStatus = (s: BenchSnapshot) => ({
  engine: s.readings.engine,
  cause: s.readings.engineStopCause,
  fuse: s.readings.ammeterFuseBlown && s.controls.ammeterInSeries,
  overRange: s.readings.ammeterOverRange,
  squeal: s.readings.beltSquealing,
  gassing: s.readings.batteryGassing,
  lamp: s.readings.chargeWarning,
  link: s.linkBlownHere,
  over: s.readings.pileOverheated,
  key: s.controls.key,
  bplus: s.controls.bplusConnected,
  low: s.readings.batterySoc01 < 0.25,
});

const ENGINE_WORDS: Record<string, string> = { off: 'Engine stopped', cranking: 'Cranking', running: 'Engine running', stalled: 'Engine stalled' };

/** What stopped the engine, in the words a technician would use, with what to check. */
export const STOP_CAUSE_WORDS: Readonly<Record<EngineStopCause, string>> = {
  'starter-circuit-open':
    'The starter gets no current: the battery circuit is open. If the series ammeter is fitted, its fuse has blown — cranking through the ammeter is more than its 10 A range takes.',
  'starter-voltage-low': 'The starter gets too little voltage to turn the engine fast enough: check the battery’s charge and the cable connections (voltage drop while cranking).',
  'supply-lost': 'The engine died: its supply voltage collapsed.',
};

export function BenchChips() {
  const s = useBench(selectStatus, shallowEqual);
  return (
    <>
      <span className="whitespace-nowrap rounded-full bg-white px-2.5 py-1 text-xs font-medium text-slate-700 ring-1 ring-slate-200" data-testid="engine-state">
        {ENGINE_WORDS[s.engine] ?? s.engine}
      </span>
      <span className={`whitespace-nowrap rounded-full px-2.5 py-1 text-xs font-medium ring-1 ${s.lamp ? 'bg-warn-100 text-warn-700 ring-warn-500/40' : 'bg-white text-slate-600 ring-slate-200'}`}>
        Charge lamp {s.lamp ? 'on' : 'off'}
      </span>
    </>
  );
}

/** Notices that stay until the cause is gone; safety stops in red, cautions in amber. */
export function BenchAlerts() {
  const s = useBench(selectStatus, shallowEqual);
  const caution = 'rounded-lg bg-warn-100 px-3 py-1.5 text-xs font-medium text-warn-700 shadow-sm ring-1 ring-warn-500/40';
  return (
    <div className="pointer-events-none flex flex-col items-start gap-1.5" data-testid="bench-alerts">
      {s.over && (
        <p role="alert" className="rounded-lg bg-stop-600 px-3 py-1.5 text-xs font-semibold text-white shadow-sm">
          Stop: carbon pile overheated and cut out. Turn the dial to zero and let it cool.
        </p>
      )}
      {s.link && (
        <p role="alert" className={caution}>
          The fusible link has burnt open: the load was held over its rating too long. The alternator no longer reaches the battery.
        </p>
      )}
      {!s.bplus && s.engine === 'running' && (
        <p role="alert" className={caution} data-testid="bplus-caution">
          Caution: the B+ lead is off with the engine running. On a real car, stop the engine and disconnect the battery before removing or refitting it: the lead is live and can arc, and an alternator running with its output open can spike the voltage.
        </p>
      )}
      {s.engine === 'stalled' && s.cause && (
        <p role="alert" className={caution}>
          {STOP_CAUSE_WORDS[s.cause]} Turn the key off before trying again.
        </p>
      )}
      {s.fuse && (
        <p role="alert" className={caution}>
          The series ammeter’s fuse has blown: it reads nothing and the battery circuit is open until you fit a new fuse.
        </p>
      )}
      {s.overRange && !s.fuse && (
        <p role="alert" className={caution}>
          The series ammeter is over its 10 A range: its fuse is about to blow.
        </p>
      )}
      {s.squeal && <p className={caution}>The belt squeals: it is slipping under this load.</p>}
      {s.gassing && (
        <p role="alert" className={caution}>
          The battery is gassing (overcharged): hydrogen and oxygen can explode — keep sparks and flames away and ventilate.
        </p>
      )}
      {s.key !== 'off' && s.engine !== 'running' && s.engine !== 'cranking' && (
        <p className={caution}>Key on, engine stopped: the battery is running down{s.low ? ' and is nearly flat' : ''}.</p>
      )}
    </div>
  );
}
