/** The carbon-pile dial wired to the bench, with the pile's heat and its cut-out. */
import type { PileParams } from '../../../../sim/params.ts';
import { benchActions, quantiseDial } from '../stores/bench-actions.ts';
import { shallowEqual, useBench, useBenchDispatch } from '../hooks/use-bench.ts';
import { LoadDial } from './load-dial.tsx';

const selectPile = (s: { controls: { pileDial01: number }; readings: { pileA: number; pileTempC: number; pileHot: boolean; pileOverheated: boolean } }) => ({
  dial: s.controls.pileDial01,
  pileA: Math.round(s.readings.pileA),
  tempC: Math.round(s.readings.pileTempC),
  hot: s.readings.pileHot,
  over: s.readings.pileOverheated,
});

export function PileControl({ pile }: { pile: PileParams }) {
  const p = useBench(selectPile, shallowEqual);
  const dispatch = useBenchDispatch();
  const change = (v: number) => {
    if (quantiseDial(v) !== quantiseDial(p.dial)) dispatch(benchActions.setPile(v));
  };
  return (
    <div className="flex flex-col items-center gap-2">
      <LoadDial value01={p.dial} onChange={change} pileA={p.pileA} pileTempC={p.tempC} warnC={pile.warnC} tripC={pile.tripC} hot={p.hot} tripped={p.over} />
      <div className="text-center text-sm">
        <span className="font-mono text-lg text-live-700" data-testid="pile-amps">
          {p.pileA}
        </span> <span className="text-slate-500">A at the pile</span>
      </div>
      {p.over ? (
        <p role="alert" className="rounded-md bg-stop-600 px-3 py-1.5 text-center text-sm font-semibold text-white">
          Stop: pile overheated and cut out. Turn the dial to zero and let it cool.
        </p>
      ) : p.hot ? (
        <p className="rounded-md bg-warn-100 px-3 py-1.5 text-center text-sm font-medium text-warn-700">Pile hot — ease off and let it cool.</p>
      ) : (
        <p className="text-center text-xs text-slate-500">Keep loaded bursts to 15 s or less.</p>
      )}
      <button type="button" className="text-xs font-medium text-slate-600 underline underline-offset-2" onClick={() => dispatch(benchActions.setPile(0))}>
        Load off
      </button>
    </div>
  );
}
