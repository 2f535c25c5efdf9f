import { get, useFieldArray, useFormContext, useWatch, type FieldPath } from 'react-hook-form';
import { FAULT_CATALOG, FAULT_KINDS, type FaultKind } from '../../../../sim/faults.ts';
import { FAULT_TEXT } from '../../../../shared/fault-catalogue-text.ts';
import { DIAGNOSTIC_TEST_LABELS, FAULT_BOUNDS } from '../../../../shared/scenario.ts';
import { Button } from '../../../components/ui/button.tsx';
import { SelectField } from '../../../components/ui/field.tsx';
import { BoundedNumberField, type ScenarioFormValues } from './param-field.tsx';

/** The usual cautions for work on a real car that these faults send a student toward. */
const CAUTIONS: Partial<Record<FaultKind, string>> = {
  'fusible-link-open': 'A fusible link opens for a reason: on a vehicle, find the cause before fitting a new one, and use the link the maker specifies.',
  'regulator-full-field': 'Overvoltage overheats the battery and can make it vent explosive gas: keep the test short and wear eye protection.',
  'regulator-set-high': 'An overcharged battery gives off explosive gas: ventilate, no sparks, eye protection.',
  'belt-slip': 'Inspect belts with the engine off; keep hands, hair and clothing clear of the fan and belts when it runs.',
  'battery-weak': 'Load testing heats the carbon pile and the battery: eye protection, short loads, let the pile cool.',
  'post-corroded': 'Battery corrosion is acidic: gloves and eye protection; disconnect the negative cable first.',
};

function FaultRow({ index, remove }: { index: number; remove: () => void }) {
  const { register, control, setValue, formState } = useFormContext<ScenarioFormValues>();
  const kind = useWatch({ control, name: `faults.${index}.kind` }) as FaultKind;
  const intermittent = useWatch({ control, name: `faults.${index}.intermittent` });
  const entry = FAULT_TEXT[kind] ?? FAULT_TEXT['diode-open'];
  const claims = FAULT_CATALOG[kind] ?? FAULT_CATALOG['diode-open'];
  const kindError = (get(formState.errors, `faults.${index}.kind`) as { message?: string } | undefined)?.message;
  const caution = CAUTIONS[kind];
  return (
    <li className="rounded-lg p-4 ring-1 ring-slate-200" aria-label={`Fault ${index + 1}: ${entry.label}`}>
      <div className="grid gap-4 sm:grid-cols-2 lg:grid-cols-[minmax(14rem,2fr)_1fr_1fr_auto]">
        <SelectField label={`Fault ${index + 1}`} error={kindError} {...register(`faults.${index}.kind`)}>
          {FAULT_KINDS.map((k) => (
            <option key={k} value={k}>
              {FAULT_TEXT[k].label}
            </option>
          ))}
        </SelectField>
        <BoundedNumberField name={`faults.${index}.severity01`} bound={FAULT_BOUNDS.severity01} hint={`0 to 1. ${entry.severityMeaning}`} />
        <BoundedNumberField name={`faults.${index}.onsetS`} bound={FAULT_BOUNDS.onsetS} hint="Sim seconds after the start; 0 is present from the start" />
        <div className="flex items-end">
          <Button variant="ghost" onClick={remove}>
            Remove fault {index + 1}
          </Button>
        </div>
      </div>
      <p className="mt-2 text-sm text-slate-600">{entry.description}</p>
      <p className="mt-1 text-xs text-slate-500">Revealed by: {claims.revealedBy.map((t) => DIAGNOSTIC_TEST_LABELS[t]).join(', ')}</p>
      {caution && <p className="mt-2 rounded bg-warn-100 px-2 py-1 text-xs text-warn-700">Caution on a real vehicle: {caution} Follow the maker’s service information.</p>}
      <div className="mt-3">
        <label className="inline-flex items-center gap-2 text-sm">
          <input
            type="checkbox"
            checked={!!intermittent}
            onChange={(e) =>
              setValue(`faults.${index}.intermittent`, e.target.checked ? { periodS: 10, onFraction01: 0.5 } : null, { shouldDirty: true, shouldValidate: true })
            }
          />
          Intermittent (comes and goes)
        </label>
        {intermittent && (
          <div className="mt-3 grid gap-4 sm:grid-cols-2">
            <BoundedNumberField name={`faults.${index}.intermittent.periodS` as FieldPath<ScenarioFormValues>} bound={FAULT_BOUNDS.periodS} />
            <BoundedNumberField name={`faults.${index}.intermittent.onFraction01` as FieldPath<ScenarioFormValues>} bound={FAULT_BOUNDS.onFraction01} />
          </div>
        )}
      </div>
    </li>
  );
}

export function FaultsSection() {
  const { control, getValues } = useFormContext<ScenarioFormValues>();
  const { fields, append, remove } = useFieldArray({ control, name: 'faults' });
  const nextId = () => {
    const taken = new Set((getValues('faults') ?? []).map((f) => f.id));
    let n = fields.length + 1;
    while (taken.has(`fault-${n}`)) n++;
    return `fault-${n}`;
  };
  return (
    <div className="space-y-3">
      {fields.length === 0 && <p className="text-sm text-slate-600">No faults: this is a healthy control. Offer “No fault” among the diagnosis choices.</p>}
      <ol className="space-y-3">
        {fields.map((f, i) => (
          <FaultRow key={f.id} index={i} remove={() => remove(i)} />
        ))}
      </ol>
      <Button variant="secondary" onClick={() => append({ id: nextId(), kind: 'diode-open', severity01: 0.5, onsetS: 0, intermittent: null })} disabled={fields.length >= 6}>
        Add a fault
      </Button>
    </div>
  );
}
