import { Controller, get, useFieldArray, useFormContext, useWatch, type FieldPath } from 'react-hook-form';
import { FAULT_CATALOG, FAULT_KINDS, type DiagnosticTest, type FaultKind } from '../../../../sim/faults.ts';
import { FAULT_TEXT } from '../../../../shared/fault-catalogue-text.ts';
import { ACCESSORY_BOUNDS, DIAGNOSTIC_TEST_LABELS, DIAGNOSTIC_TESTS, NO_FAULT_LABEL, PASS_RULE_BOUNDS, type DiagnosisChoice } from '../../../../shared/scenario.ts';
import { Button } from '../../../components/ui/button.tsx';
import { FieldShell } from '../../../components/ui/field.tsx';
import { BoundedNumberField, FieldGrid, type ScenarioFormValues } from './param-field.tsx';

const errorOf = (errors: object, name: string) => (get(errors, name) as { message?: string; root?: { message?: string } } | undefined)?.message ?? (get(errors, name) as { root?: { message?: string } } | undefined)?.root?.message;

function CheckList<T extends string>({ legend, name, options, error }: { legend: string; name: 'testsExpected' | 'diagnosisChoices'; options: { value: T; label: string; note?: string }[]; error?: string | undefined }) {
  const { control } = useFormContext<ScenarioFormValues>();
  return (
    <Controller
      control={control}
      name={name}
      render={({ field }) => {
        const selected = new Set((field.value ?? []) as string[]);
        const toggle = (value: T, on: boolean) => {
          const next = options.map((o) => o.value).filter((v) => (v === value ? on : selected.has(v)));
          field.onChange(next);
        };
        return (
          <fieldset aria-describedby={error ? `${name}-error` : undefined}>
            <legend className="text-sm font-medium text-slate-800">{legend}</legend>
            <div className="mt-2 grid gap-1.5 sm:grid-cols-2">
              {options.map((o) => (
                <label key={o.value} className="flex items-start gap-2 text-sm">
                  <input type="checkbox" className="mt-0.5" checked={selected.has(o.value)} onChange={(e) => toggle(o.value, e.target.checked)} onBlur={field.onBlur} />
                  <span>
                    {o.label}
                    {o.note && <span className="ml-1 text-xs text-live-700">{o.note}</span>}
                  </span>
                </label>
              ))}
            </div>
            {error && (
              <p id={`${name}-error`} role="alert" className="mt-1 text-xs font-medium text-stop-700">
                {error}
              </p>
            )}
          </fieldset>
        );
      }}
    />
  );
}

export function TestsAndRulesSection() {
  const { control, register, formState, setValue } = useFormContext<ScenarioFormValues>();
  const faults = useWatch({ control, name: 'faults' }) ?? [];
  const mode = useWatch({ control, name: 'passRules.output.mode' });
  const revealing = new Set<DiagnosticTest>(faults.flatMap((f) => FAULT_CATALOG[f.kind as FaultKind]?.revealedBy ?? []));
  const b = PASS_RULE_BOUNDS;
  return (
    <div className="space-y-6">
      <CheckList
        legend="Tests the student is expected to run"
        name="testsExpected"
        error={errorOf(formState.errors, 'testsExpected')}
        options={DIAGNOSTIC_TESTS.map((t) => ({ value: t, label: DIAGNOSTIC_TEST_LABELS[t], ...(revealing.has(t) ? { note: 'reveals a fault here' } : {}) }))}
      />
      <fieldset>
        <legend className="text-sm font-medium text-slate-800">Output test pass mark</legend>
        <p className="text-xs text-slate-500">Within 10 % of rating (90 %) is common practice; some makers use 60–70 % of rating or “within 15 A”.</p>
        <div className="mt-2 flex flex-wrap gap-4 text-sm">
          <label className="inline-flex items-center gap-2">
            <input
              type="radio"
              value="percent-of-rating"
              checked={mode === 'percent-of-rating'}
              onChange={() => setValue('passRules.output', { mode: 'percent-of-rating', percent: 90 }, { shouldDirty: true, shouldValidate: true })}
            />
            A percentage of the rating
          </label>
          <label className="inline-flex items-center gap-2">
            <input
              type="radio"
              value="within-amps"
              checked={mode === 'within-amps'}
              onChange={() => setValue('passRules.output', { mode: 'within-amps', amps: 15 }, { shouldDirty: true, shouldValidate: true })}
            />
            Within a number of amps of the rating
          </label>
        </div>
        <div className="mt-3 max-w-xs">
          {mode === 'within-amps' ? <BoundedNumberField name="passRules.output.amps" bound={b.amps} /> : <BoundedNumberField name="passRules.output.percent" bound={b.percent} />}
        </div>
      </fieldset>
      <FieldGrid>
        <BoundedNumberField name="passRules.outputLoadedVoltageV" bound={b.outputLoadedVoltageV} hint="The carbon pile holds the system about here while output is read" />
        <BoundedNumberField name="passRules.regulatedMinV" bound={b.regulatedMinV} />
        <BoundedNumberField name="passRules.regulatedMaxV" bound={b.regulatedMaxV} />
        <BoundedNumberField name="passRules.maxDropPositiveV" bound={b.maxDropPositiveV} hint="Under load; 0.2 V is a common limit" />
        <BoundedNumberField name="passRules.maxDropGroundV" bound={b.maxDropGroundV} hint="Under load; 0.2 V is a common limit" />
        <BoundedNumberField name="passRules.maxRippleVac" bound={b.maxRippleVac} hint="AC under load; where it is read matters: about 0.1 V at the battery posts, 0.5 V at B+ to case" />
        <BoundedNumberField name="passRules.maxKeyOffDrawA" bound={b.maxKeyOffDrawA} hint="After the modules sleep; 0.025–0.05 A is typical" />
        <BoundedNumberField name="passRules.batteryLoadMinV" bound={b.batteryLoadMinV} hint="At the end of 15 s at half CCA; 9.6 V at 21 °C" />
        <BoundedNumberField name="passRules.socChargedMinV" bound={b.socChargedMinV} hint="Resting voltage before a load test; 12.4 V" />
      </FieldGrid>
      <input type="hidden" {...register('passRules.output.mode')} />
    </div>
  );
}

export function DiagnosisChoicesSection() {
  const { control, formState, setValue, getValues } = useFormContext<ScenarioFormValues>();
  const faults = useWatch({ control, name: 'faults' }) ?? [];
  const present = new Set(faults.map((f) => f.kind));
  const options: { value: DiagnosisChoice; label: string; note?: string }[] = [
    ...FAULT_KINDS.map((k) => ({ value: k, label: FAULT_TEXT[k].label, ...(present.has(k) ? { note: 'in this scenario' } : {}) })),
    { value: 'none' as const, label: NO_FAULT_LABEL },
  ];
  const includeFaults = () => {
    const current = new Set(getValues('diagnosisChoices') ?? []);
    for (const k of present) current.add(k);
    if (present.size === 0) current.add('none');
    setValue('diagnosisChoices', options.map((o) => o.value).filter((v) => current.has(v)), { shouldDirty: true, shouldValidate: true });
  };
  return (
    <div className="space-y-3">
      <p className="text-sm text-slate-600">The list the student picks the fault from: every fault in the scenario plus a few plausible distractors.</p>
      <CheckList legend="Diagnosis choices" name="diagnosisChoices" options={options} error={errorOf(formState.errors, 'diagnosisChoices')} />
      <Button variant="secondary" size="sm" onClick={includeFaults}>
        Include this scenario’s faults
      </Button>
    </div>
  );
}

/** A list of short texts edited as one line each. */
export function LinesField({ name, label, hint }: { name: 'hints' | 'objectives'; label: string; hint: string }) {
  const { control, formState } = useFormContext<ScenarioFormValues>();
  const error = errorOf(formState.errors, name) ?? (get(formState.errors, name) as { message?: string }[] | undefined)?.find?.((e) => e?.message)?.message;
  return (
    <Controller
      control={control}
      name={name}
      render={({ field }) => (
        <FieldShell label={label} error={error} hint={hint}>
          {({ id, describedBy }) => (
            <textarea
              id={id}
              aria-describedby={describedBy}
              aria-invalid={error ? true : undefined}
              rows={4}
              className="block w-full rounded-md border-0 bg-white px-3 py-2 text-sm ring-1 ring-slate-300 focus:ring-2 focus:ring-live-500"
              value={(field.value ?? []).join('\n')}
              onChange={(e) => field.onChange(e.target.value.split('\n'))}
              onBlur={() => {
                field.onChange((field.value ?? []).map((l) => l.trim()).filter(Boolean));
                field.onBlur();
              }}
            />
          )}
        </FieldShell>
      )}
    />
  );
}

export function AccessoriesField() {
  const { control, register, getValues, formState } = useFormContext<ScenarioFormValues>();
  const { fields, append, remove, update } = useFieldArray({ control, name: 'vehicle.params.loads.accessories' });
  const inputClass = 'block w-full rounded-md border-0 bg-white px-2 py-1.5 text-sm ring-1 ring-slate-300';
  return (
    <fieldset>
      <legend className="text-sm font-medium text-slate-800">Switchable accessories</legend>
      <p className="text-xs text-slate-500">
        Lamps and heaters as a resistance ({ACCESSORY_BOUNDS.resistanceOhm.min}–{ACCESSORY_BOUNDS.resistanceOhm.max} Ω), electronics and motors as a constant current (
        {ACCESSORY_BOUNDS.currentA.min}–{ACCESSORY_BOUNDS.currentA.max} A). “Key off” marks a load fed straight from the battery, which works with the key off (headlamps on most cars).
      </p>
      <table className="mt-2 w-full text-sm">
        <thead className="text-left text-xs text-slate-500">
          <tr>
            <th className="py-1 pr-2 font-medium">Name</th>
            <th className="py-1 pr-2 font-medium">Kind</th>
            <th className="py-1 pr-2 font-medium">Value</th>
            <th className="py-1 pr-2 font-medium">Key off</th>
            <th className="py-1 font-medium">
              <span className="sr-only">Remove</span>
            </th>
          </tr>
        </thead>
        <tbody>
          {fields.map((f, i) => {
            const current = getValues(`vehicle.params.loads.accessories.${i}`);
            const isCurrent = 'currentA' in current;
            const err = get(formState.errors, `vehicle.params.loads.accessories.${i}`) as Record<string, { message?: string }> | { message?: string } | undefined;
            const message = err && 'message' in err && typeof err.message === 'string' ? err.message : err ? Object.values(err as Record<string, { message?: string }>).find((e) => e?.message)?.message : undefined;
            return (
              <tr key={f.id} className="align-top">
                <td className="py-1 pr-2">
                  <input aria-label={`Accessory ${i + 1} name`} className={inputClass} {...register(`vehicle.params.loads.accessories.${i}.label`)} />
                  {message && <p className="text-xs text-stop-700">{message}</p>}
                </td>
                <td className="py-1 pr-2">
                  <select
                    aria-label={`Accessory ${i + 1} kind`}
                    className={inputClass}
                    value={isCurrent ? 'current' : 'resistance'}
                    onChange={(e) => {
                      const v = getValues(`vehicle.params.loads.accessories.${i}`);
                      const keyOff = v.keyOff ? { keyOff: true } : {};
                      update(i, e.target.value === 'current' ? { id: v.id, label: v.label, currentA: 5, ...keyOff } : { id: v.id, label: v.label, resistanceOhm: 1.5, ...keyOff });
                    }}
                  >
                    <option value="resistance">Resistance (Ω)</option>
                    <option value="current">Current (A)</option>
                  </select>
                </td>
                <td className="py-1 pr-2">
                  {isCurrent ? (
                    <input aria-label={`Accessory ${i + 1} current (A)`} type="number" step="any" className={inputClass} {...register(`vehicle.params.loads.accessories.${i}.currentA` as FieldPath<ScenarioFormValues>, { valueAsNumber: true })} />
                  ) : (
                    <input aria-label={`Accessory ${i + 1} resistance (Ω)`} type="number" step="any" className={inputClass} {...register(`vehicle.params.loads.accessories.${i}.resistanceOhm` as FieldPath<ScenarioFormValues>, { valueAsNumber: true })} />
                  )}
                </td>
                <td className="py-1 pr-2 text-center">
                  <input
                    type="checkbox"
                    className="mt-2"
                    aria-label={`Accessory ${i + 1} works with the key off (fed straight from the battery)`}
                    title="Works with the key off (fed straight from the battery, like headlamps)"
                    {...register(`vehicle.params.loads.accessories.${i}.keyOff` as FieldPath<ScenarioFormValues>)}
                  />
                </td>
                <td className="py-1">
                  <Button size="sm" variant="ghost" onClick={() => remove(i)}>
                    Remove<span className="sr-only"> accessory {i + 1}</span>
                  </Button>
                </td>
              </tr>
            );
          })}
        </tbody>
      </table>
      <Button
        size="sm"
        variant="secondary"
        className="mt-2"
        disabled={fields.length >= 16}
        onClick={() => {
          const taken = new Set(getValues('vehicle.params.loads.accessories').map((a) => a.id));
          let n = fields.length + 1;
          while (taken.has(`accessory-${n}`)) n++;
          append({ id: `accessory-${n}`, label: 'New accessory', resistanceOhm: 2 });
        }}
      >
        Add an accessory
      </Button>
    </fieldset>
  );
}
