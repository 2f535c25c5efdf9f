/**
 * Recording readings: pick the test and the quantity, and "Record this
 * reading" writes down what the meter shows now, with the sim time and the
 * hook-up in words. The list can be pruned before submitting.
 */
import { useEffect } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import type { DiagnosticTest } from '../../../../sim/faults.ts';
import { readingQuantitySchema } from '../../../../shared/api/attempts.ts';
import { diagnosticTestSchema } from '../../../../shared/scenario.ts';
import { Button } from '../../../components/ui/button.tsx';
import { SelectField, TextField } from '../../../components/ui/field.tsx';
import { useBenchEngine } from '../hooks/use-bench.ts';
import { useBenchUi } from '../stores/bench-ui-store.ts';
import { DEFAULT_QUANTITY, QUANTITY_LABELS, describeSetup, meterValue, type LocalReading } from './reading-capture.ts';

const recordFormSchema = z.object({
  test: diagnosticTestSchema,
  quantity: readingQuantitySchema,
  note: z.string().max(120, 'Keep the note under 120 characters'),
});
type RecordForm = z.infer<typeof recordFormSchema>;

function newId(): string {
  return globalThis.crypto?.randomUUID?.() ?? `r-${Date.now().toString(36)}-${Math.random().toString(36).slice(2, 10)}`;
}

const formatTime = (ms: number) => `${String(Math.floor(ms / 60_000)).padStart(2, '0')}:${String(Math.floor((ms % 60_000) / 1000)).padStart(2, '0')}`;

export function ReadingsPanel({
  tests,
  readings,
  onAdd,
  onRemove,
  disabled,
}: {
  tests: { test: DiagnosticTest; label: string }[];
  readings: LocalReading[];
  onAdd: (r: LocalReading) => void;
  onRemove: (id: string) => void;
  disabled?: boolean;
}) {
  const engine = useBenchEngine();
  const procedure = useBenchUi((s) => s.procedure);
  const form = useForm<RecordForm>({
    resolver: zodResolver(recordFormSchema),
    defaultValues: { test: procedure, quantity: DEFAULT_QUANTITY[procedure], note: '' },
  });
  const { register, handleSubmit, setValue, setError, formState } = form;

  // Follow the procedure tab the student has open.
  useEffect(() => {
    setValue('test', procedure);
    setValue('quantity', DEFAULT_QUANTITY[procedure]);
  }, [procedure, setValue]);

  const record = handleSubmit((values) => {
    const { atMs, readings: meters } = engine.readNow();
    const taken = meterValue(values.quantity, meters);
    if (!taken) {
      setError('quantity', { message: 'That meter shows no reading now: check the hook-up.' });
      return;
    }
    const setup = describeSetup(engine.getSnapshot().controls, meters);
    onAdd({
      id: newId(),
      test: values.test,
      quantity: values.quantity,
      value: taken.value,
      unit: taken.unit,
      atMs,
      where: (values.note ? `${values.note} — ${setup}` : setup).slice(0, 200),
      tachRpm: meters.tachRpm,
    });
    setValue('note', '');
  });

  return (
    <div className="space-y-4">
      <form onSubmit={record} className="grid gap-3 sm:grid-cols-2" aria-label="Record a reading">
        <SelectField label="Test" {...register('test')} error={formState.errors.test?.message}>
          {tests.map((t) => (
            <option key={t.test} value={t.test}>
              {t.label}
            </option>
          ))}
        </SelectField>
        <SelectField label="What was measured" {...register('quantity')} error={formState.errors.quantity?.message}>
          {(Object.keys(QUANTITY_LABELS) as (keyof typeof QUANTITY_LABELS)[]).map((q) => (
            <option key={q} value={q}>
              {QUANTITY_LABELS[q]}
            </option>
          ))}
        </SelectField>
        <div className="sm:col-span-2">
          <TextField label="Note (optional)" placeholder="e.g. after 15 s at half CCA" {...register('note')} error={formState.errors.note?.message} />
        </div>
        <div className="sm:col-span-2">
          <Button type="submit" disabled={disabled}>
            Record this reading
          </Button>
        </div>
      </form>
      {readings.length === 0 ? (
        <p className="text-sm text-slate-500">No readings recorded yet.</p>
      ) : (
        <table className="w-full text-left text-sm" aria-label="Recorded readings">
          <thead className="text-xs uppercase tracking-wide text-slate-400">
            <tr>
              <th className="py-1 font-medium">Time</th>
              <th className="py-1 font-medium">Test</th>
              <th className="py-1 text-right font-medium">Value</th>
              <th className="py-1 pl-3 font-medium">Where</th>
              <th className="py-1">
                <span className="sr-only">Remove</span>
              </th>
            </tr>
          </thead>
          <tbody className="divide-y divide-slate-100">
            {readings.map((r) => (
              <tr key={r.id} data-testid="recorded-reading">
                <td className="py-1.5 font-mono text-xs text-slate-500">{formatTime(r.atMs)}</td>
                <td className="py-1.5 text-slate-700">{tests.find((t) => t.test === r.test)?.label ?? r.test}</td>
                <td className="whitespace-nowrap py-1.5 text-right font-mono font-semibold text-slate-900">
                  {r.value} {r.unit}
                </td>
                <td className="max-w-56 truncate py-1.5 pl-3 text-xs text-slate-500" title={r.where}>
                  {r.where}
                </td>
                <td className="py-1.5 text-right">
                  <Button variant="ghost" size="sm" disabled={disabled} onClick={() => onRemove(r.id)} aria-label={`Remove reading ${r.value} ${r.unit}`}>
                    Remove
                  </Button>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </div>
  );
}
