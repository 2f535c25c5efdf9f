/** The carbon-pile dial wired to the bench, with the pile's heat, its cut-out and the time the load has been on. */
import type { PileParams } from '../../../../sim/params.ts';
import type { BenchSnapshot } from '../stores/bench-engine.ts';
import { quantiseDial } from '../../../../shared/dial.ts';
import { benchActions } from '../stores/bench-actions.ts';
import { shallowEqual, useBench, useBenchDispatch, useBenchEngine } from '../hooks/use-bench.ts';
import { LoadDial } from './load-dial.tsx';

/** A loaded burst longer than this gets the amber caution (common practice: about 15 s, then let the pile cool). */
export const BURST_LIMIT_S = 15;

const selectPile = (s: BenchSnapshot) => ({
  dial: s.controls.pileDial01,
  pileA: Math.round(s.readings.pileA),
  tempC: Math.round(s.readings.pileTempC),
  hot: s.readings.pileHot,
  over: s.readings.pileOverheated,
  burstS: s.burst.sinceMs === null ? null : Math.floor((s.timeMs - s.burst.sinceMs) / 1000),
  lastBurstS: s.burst.lastMs === null ? null : Math.round(s.burst.lastMs / 1000),
});

/** Seconds under load, counting while the pile draws current; amber past the limit. */
export function BurstTimer({ burstS, lastBurstS }: { burstS: number | null; lastBurstS: number | null }) {
  if (burstS === null) {
    return (
      <p className="text-xs text-slate-600" data-testid="burst-timer">
        {lastBurstS === null ? `Keep loaded bursts to ${BURST_LIMIT_S} s or less.` : `Last burst ${lastBurstS} s.`}
      </p>
    );
  }
  const long = burstS >= BURST_LIMIT_S;
  return (
    <p
      data-testid="burst-timer"
      aria-live={long ? 'polite' : 'off'}
      className={`rounded-md px-2 py-1 text-center text-sm font-semibold tabular-nums ${long ? 'bg-warn-100 text-warn-700 ring-1 ring-warn-500/40' : 'bg-live-50 text-live-700'}`}
    >
      Load on {burstS} s{long ? ' — turn it off and let the pile cool' : ` of ${BURST_LIMIT_S}`}
    </p>
  );
}

export function PileControl({ pile, dialSize = 160 }: { pile: PileParams; dialSize?: number }) {
  const p = useBench(selectPile, shallowEqual);
  const dispatch = useBenchDispatch();
  const engine = useBenchEngine();
  // Compared with the controls as dispatched, not as last shown: two turns within one frame both count.
  const change = (v: number) => {
    if (quantiseDial(v) !== quantiseDial(engine.controlsNow().pileDial01)) dispatch(benchActions.setPile(v));
  };
  return (
    <div className="flex items-center gap-3">
      <LoadDial value01={p.dial} onChange={change} pileA={p.pileA} pileTempC={p.tempC} warnC={pile.warnC} tripC={pile.tripC} hot={p.hot} tripped={p.over} size={dialSize} />
      <div className="flex w-40 min-w-0 flex-col items-start gap-1.5 xl:w-48">
        <p className="text-sm">
          <span className="font-mono text-lg font-semibold text-live-700" data-testid="pile-amps">
            {p.pileA}
          </span>{' '}
          <span className="text-slate-600">A at the pile</span>
        </p>
        <BurstTimer burstS={p.burstS} lastBurstS={p.lastBurstS} />
        {p.over ? (
          <p className="text-xs font-semibold text-stop-700">Cut out: dial to zero, let it cool.</p>
        ) : p.hot ? (
          <p className="text-xs font-medium text-warn-700">Pile hot: ease off and let it cool.</p>
        ) : null}
        <button type="button" className="min-h-8 rounded-md bg-white px-3 text-sm font-medium text-slate-800 ring-1 ring-slate-300 hover:bg-slate-50" onClick={() => dispatch(benchActions.setPile(0))}>
          Load off
        </button>
        <p className="text-[11px] leading-tight text-slate-600">
          Ring: pile heat (amber from {pile.warnC} °C, cut-out at {pile.tripC} °C).
        </p>
      </div>
    </div>
  );
}
