/**
 * What the model says has happened to the car: engine state, the charge
 * lamp, an open fusible link, a hot or cut-out pile, a battery running down.
 */
import { shallowEqual, useBench } from '../hooks/use-bench.ts';

const selectStatus = (s: { linkBlownHere: boolean; readings: { engine: string; chargeWarning: boolean; pileOverheated: boolean; pileHot: boolean; voltmeterV: number | null; batterySoc01: number }; controls: { key: string } ; timeMs: number }) => ({
  engine: s.readings.engine,
  lamp: s.readings.chargeWarning,
  link: s.linkBlownHere,
  over: s.readings.pileOverheated,
  hot: s.readings.pileHot,
  key: s.controls.key,
  low: s.readings.batterySoc01 < 0.25,
  minutes: Math.floor(s.timeMs / 60_000),
  seconds: Math.floor((s.timeMs % 60_000) / 1000),
});

const ENGINE_WORDS: Record<string, string> = { off: 'Engine stopped', cranking: 'Cranking', running: 'Engine running', stalled: 'Engine stalled — will not crank' };

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
      {s.engine === 'stalled' && (
        <span role="alert" className="rounded-full bg-warn-100 px-2.5 py-1 text-warn-700 ring-1 ring-warn-500/40">
          Battery too low to crank
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
