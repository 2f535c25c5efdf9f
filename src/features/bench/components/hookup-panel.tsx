/**
 * The tester hook-up from the keyboard, mirroring the drawing: where each
 * lead is clipped, which cable the clamp encloses and its arrow, the clamp
 * zero, the series ammeter for the draw test and the B+ lead at the stud.
 */
import type { ConnectionPoint, Conductor, Controls } from '../../../../sim/inputs.ts';
import { CONDUCTORS, CONNECTION_POINTS } from '../../../../sim/inputs.ts';
import { Button } from '../../../components/ui/button.tsx';
import { SelectField } from '../../../components/ui/field.tsx';
import { benchActions, reverseArrow } from '../stores/bench-actions.ts';
import { useBenchUi } from '../stores/bench-ui-store.ts';
import { shallowEqual, useBench, useBenchDispatch } from '../hooks/use-bench.ts';
import { CONDUCTOR_LABELS, POINT_LABELS } from '../../../components/schematic/layout.ts';

const selectHookup = (s: { controls: Controls; readings: { ammeterFuseBlown: boolean } }) => ({
  fuseBlown: s.readings.ammeterFuseBlown,
  red: s.controls.leads.red,
  black: s.controls.leads.black,
  conductor: s.controls.clamp.conductor,
  arrow: s.controls.clamp.arrow,
  ammeter: s.controls.ammeterInSeries,
  bplus: s.controls.bplusConnected,
});

export function HookupPanel() {
  const h = useBench(selectHookup, shallowEqual);
  const dispatch = useBenchDispatch();
  const tool = useBenchUi((s) => s.tool);
  const pickTool = useBenchUi((s) => s.pickTool);
  const asPoint = (v: string) => (v === '' ? null : (v as ConnectionPoint));
  return (
    <div className="space-y-3">
      <div className="grid gap-3 sm:grid-cols-2">
        <SelectField label="Red lead" value={h.red ?? ''} onChange={(e) => dispatch(benchActions.clipLead('red', asPoint(e.target.value)))}>
          <option value="">Not connected</option>
          {CONNECTION_POINTS.map((p) => (
            <option key={p} value={p}>
              {POINT_LABELS[p]}
            </option>
          ))}
        </SelectField>
        <SelectField label="Black lead" value={h.black ?? ''} onChange={(e) => dispatch(benchActions.clipLead('black', asPoint(e.target.value)))}>
          <option value="">Not connected</option>
          {CONNECTION_POINTS.map((p) => (
            <option key={p} value={p}>
              {POINT_LABELS[p]}
            </option>
          ))}
        </SelectField>
        <SelectField
          label="Inductive clamp"
          value={h.conductor ?? ''}
          onChange={(e) => dispatch(benchActions.placeClamp(e.target.value === '' ? null : (e.target.value as Conductor), h.arrow))}
        >
          <option value="">Not on a cable</option>
          {CONDUCTORS.map((c) => (
            <option key={c} value={c}>
              {CONDUCTOR_LABELS[c]}
            </option>
          ))}
        </SelectField>
        <div className="space-y-1">
          <p className="text-sm font-medium text-slate-800" id="clamp-arrow-label">
            Clamp arrow
          </p>
          <div className="flex items-center gap-2">
            <span className="text-sm text-slate-700" data-testid="clamp-arrow">
              {h.arrow === 'toward-battery' ? '→ toward the battery' : '→ toward the alternator'}
            </span>
            <Button variant="secondary" size="sm" onClick={() => dispatch(benchActions.placeClamp(h.conductor, reverseArrow(h.arrow)))}>
              Reverse clamp
            </Button>
          </div>
        </div>
      </div>
      <div className="flex flex-wrap gap-2">
        <Button variant="secondary" size="sm" onClick={() => dispatch(benchActions.zeroClamp())}>
          Zero clamp
        </Button>
        <Button variant="secondary" size="sm" aria-pressed={h.ammeter} onClick={() => dispatch(benchActions.fitAmmeter(!h.ammeter))}>
          {h.ammeter ? 'Remove series ammeter' : 'Fit series ammeter at battery −'}
        </Button>
        {h.fuseBlown && (
          <Button variant="secondary" size="sm" onClick={() => dispatch(benchActions.replaceAmmeterFuse())}>
            Fit a new fuse in the ammeter
          </Button>
        )}
        <Button variant="secondary" size="sm" aria-pressed={!h.bplus} onClick={() => dispatch(benchActions.connectBplus(!h.bplus))}>
          {h.bplus ? 'Remove B+ lead at the stud' : 'Refit B+ lead'}
        </Button>
      </div>
      <p className="text-xs text-slate-500">
        In the drawing: drag a lead clip or the clamp onto a point or cable, or click it and then click where it goes.
        {tool && (
          <>
            {' '}
            <span className="font-medium text-live-700">{tool === 'clamp' ? 'Clamp' : tool === 'red' ? 'Red lead' : 'Black lead'} picked up — click a target.</span>{' '}
            <button type="button" className="underline" onClick={() => pickTool(null)}>
              Put it down
            </button>
          </>
        )}
      </p>
    </div>
  );
}
