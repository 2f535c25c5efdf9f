/**
 * The car as a whole, checked while the instructor edits it: what the
 * alternator's machine constants deliver against its nameplate (with a way to
 * match them), whether the car starts as set up, and every rule the editor
 * applies beyond each number's own range (shared/vehicle-rules.ts).
 */
import { useDeferredValue, useMemo } from 'react';
import { useFormContext, useWatch } from 'react-hook-form';
import type { Fault } from '../../../../sim/faults.ts';
import type { VehicleParams } from '../../../../sim/params.ts';
import { defaultVehicleParams, VEHICLE_PARAM_BOUNDS } from '../../../../sim/params.ts';
import { crankTrial } from '../../../../sim/vehicle-checks.ts';
import { vehicleParamsSchema } from '../../../../shared/scenario.ts';
import { nameplateCheck, vehicleIssues } from '../../../../shared/vehicle-rules.ts';
import { Button } from '../../../components/ui/button.tsx';
import type { ScenarioFormValues } from './param-field.tsx';

function usable(raw: unknown): VehicleParams | null {
  const r = vehicleParamsSchema.safeParse(raw);
  return r.success ? r.data : null;
}

/** The alternator's delivered output against its rating, and a button that fits the stator to the rating. */
export function NameplateCheck() {
  const { control, setValue } = useFormContext<ScenarioFormValues>();
  const raw = useDeferredValue(useWatch({ control, name: 'vehicle.params' }));
  const params = useMemo(() => usable(raw), [raw]);
  const plate = useMemo(() => (params ? nameplateCheck(params) : null), [params]);
  if (!params || !plate) return <p className="text-xs text-slate-500 sm:col-span-2 lg:col-span-3">Complete the alternator’s numbers to see what it delivers.</p>;
  const fit = () => {
    const ref = defaultVehicleParams().alternator;
    const k = params.alternator.ratedCurrentA / ref.ratedCurrentA;
    const r = Number((ref.statorResistanceOhmAt20C / k).toPrecision(3));
    const sized: VehicleParams = { ...params, alternator: { ...params.alternator, statorResistanceOhmAt20C: r } };
    const b = VEHICLE_PARAM_BOUNDS['alternator.synchronousInductanceH'];
    const h = nameplateCheck(sized).fittedInductanceH ?? nameplateCheck({ ...sized, alternator: { ...sized.alternator, synchronousInductanceH: b.min } }).fittedInductanceH;
    const opts = { shouldDirty: true, shouldValidate: true } as const;
    setValue('vehicle.params.alternator.statorResistanceOhmAt20C', r, opts);
    if (h !== null) setValue('vehicle.params.alternator.synchronousInductanceH', Number(h.toPrecision(3)), opts);
  };
  const pct = Math.round(plate.ratio * 100);
  return (
    <div className="text-xs sm:col-span-2 lg:col-span-3" data-testid="nameplate-check">
      <p className={plate.ok ? 'text-slate-600' : 'font-medium text-warn-700'}>
        The rating is the nameplate; the output comes from the stator. These machine constants deliver{' '}
        <strong>{Math.round(plate.deliveredA)} A</strong> at {params.alternator.ratedAltRpm.toLocaleString('en')} rpm (cold, 13.5 V): {pct} % of the{' '}
        {params.alternator.ratedCurrentA} A rating{plate.ok ? '.' : ' — more than 15 % off.'}{' '}
        <Button size="sm" variant="secondary" onClick={fit}>
          Size the stator for {params.alternator.ratedCurrentA} A
        </Button>
      </p>
    </div>
  );
}

/** Whether the car starts as set up, and every car-wide error and warning. */
export function VehicleChecksPanel() {
  const { control } = useFormContext<ScenarioFormValues>();
  const raw = useDeferredValue(useWatch({ control, name: 'vehicle.params' }));
  const rawFaults = useDeferredValue(useWatch({ control, name: 'faults' }));
  const params = useMemo(() => usable(raw), [raw]);
  const faults = useMemo(
    () => ((rawFaults ?? []) as Fault[]).filter((f) => f && typeof f.kind === 'string' && typeof f.severity01 === 'number').map((f, i) => ({ ...f, id: f.id || `fault-${i}`, onsetS: 0, intermittent: null })),
    [rawFaults],
  );
  const result = useMemo(() => (params ? { issues: vehicleIssues(params, faults), trial: crankTrial(params, faults) } : null), [params, faults]);
  if (!result) return null;
  const { issues, trial } = result;
  return (
    <section aria-labelledby="vehicle-checks-title" className="rounded-lg bg-stone-50 p-3 ring-1 ring-slate-200" data-testid="vehicle-checks">
      <h3 id="vehicle-checks-title" className="text-sm font-semibold text-slate-800">
        Car checks
      </h3>
      <p className="mt-1 text-xs text-slate-600">
        {trial.started
          ? `Starts in ${trial.crankS?.toFixed(1)} s of cranking (lowest ${trial.lowestStarterV.toFixed(1)} V at the starter) with the scenario’s faults in place.`
          : 'Does not start with the scenario’s faults in place.'}
      </p>
      {issues.length === 0 ? (
        <p className="mt-1 text-xs text-slate-600">No problems found with the car as a whole.</p>
      ) : (
        <ul className="mt-2 space-y-1">
          {issues.map((issue, i) => (
            <li key={i} role={issue.level === 'error' ? 'alert' : undefined} className={`text-xs ${issue.level === 'error' ? 'font-medium text-stop-700' : 'text-warn-700'}`}>
              {issue.level === 'error' ? 'Must fix: ' : 'Note: '}
              {issue.message}
            </li>
          ))}
        </ul>
      )}
    </section>
  );
}
