import { get, useFormContext, type FieldPath } from 'react-hook-form';
import type { z } from 'zod';
import type { NumericParamPath, ParamBound } from '../../../../sim/params.ts';
import { labelledBound, type LabelledBound } from '../../../../shared/param-labels.ts';
import type { scenarioSchema } from '../../../../shared/scenario.ts';
import { TextField } from '../../../components/ui/field.tsx';

export type ScenarioFormValues = z.input<typeof scenarioSchema>;

const fmt = (n: number) => (n !== 0 && (Math.abs(n) < 0.001 || Math.abs(n) >= 1e5) ? n.toExponential().replace('e+', 'e') : String(n));

export function unitText(b: Pick<ParamBound, 'unit'>): string {
  return b.unit === '' ? '' : b.unit === ':1' ? ':1' : ` ${b.unit}`;
}

/** A number input with its label, unit, allowed range and the schema's message when out of range. */
export function BoundedNumberField({ name, bound, hint }: { name: FieldPath<ScenarioFormValues>; bound: LabelledBound; hint?: string }) {
  const { register, formState } = useFormContext<ScenarioFormValues>();
  const error = (get(formState.errors, name) as { message?: string } | undefined)?.message;
  const unit = bound.unit && bound.unit !== ':1' ? ` (${bound.unit})` : bound.unit === ':1' ? ' (:1)' : '';
  return (
    <TextField
      label={`${bound.label}${unit}`}
      type="number"
      inputMode="decimal"
      step="any"
      min={bound.min}
      max={bound.max}
      hint={hint ?? `${fmt(bound.min)} to ${fmt(bound.max)}${unitText(bound)}`}
      error={error}
      {...register(name, { valueAsNumber: true })}
    />
  );
}

/** A vehicle parameter, by its dotted path in the model's parameters. */
export function ParamField({ path, hint }: { path: NumericParamPath; hint?: string }) {
  return <BoundedNumberField name={`vehicle.params.${path}` as FieldPath<ScenarioFormValues>} bound={labelledBound(path)} {...(hint ? { hint } : {})} />;
}

export function FieldGrid({ children }: { children: React.ReactNode }) {
  return <div className="grid gap-4 sm:grid-cols-2 lg:grid-cols-3">{children}</div>;
}

/** Rarely changed model parameters, folded away. */
export function Advanced({ title = 'Model details', children }: { title?: string; children: React.ReactNode }) {
  return (
    <details className="group mt-4 rounded-lg bg-stone-50 p-3 ring-1 ring-slate-200">
      <summary className="cursor-pointer text-sm font-medium text-slate-700">{title}</summary>
      <div className="mt-3">{children}</div>
    </details>
  );
}
