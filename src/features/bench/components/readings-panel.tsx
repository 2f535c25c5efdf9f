/**
 * Recording readings: the record bar takes the test from the procedure in
 * view and the quantity that test usually records (both can be changed), and
 * "Record" writes down what the meter shows now, with the sim time and the
 * hook-up in words. The list can be pruned before submitting.
 */
import { useEffect } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import type { DiagnosticTest } from '../../../../sim/faults.ts';
import type { AccessoryParams } from '../../../../sim/params.ts';
import { readingQuantitySchema, type ReadingQuantity } from '../../../../shared/api/attempts.ts';
import { diagnosticTestSchema } from '../../../../shared/scenario.ts';
import { Button } from '../../../components/ui/button.tsx';
import { useBenchEngine } from '../hooks/use-bench.ts';
import { DEFAULT_QUANTITY, describeSetup, meterValue, type LocalReading } from './reading-capture.ts';
import { SHORT_TEST_NAMES, useOpenTest } from './procedure-panel.tsx';

const recordFormSchema = z.object({
  test: diagnosticTestSchema,
  quantity: readingQuantitySchema,
  note: z.string().max(120, 'Keep the note under 120 characters'),
});
type RecordForm = z.infer<typeof recordFormSchema>;

function newId(): string {
  return globalThis.crypto?.randomUUID?.() ?? `r-${Date.now().toString(36)}-${Math.random().toString(36).slice(2, 10)}`;
}

export const formatClock = (ms: number) => `${String(Math.floor(ms / 60_000)).padStart(2, '0')}:${String(Math.floor((ms % 60_000) / 1000)).padStart(2, '0')}`;

/** Short names for the record bar's narrow list. */
const QUANTITY_SHORT: Record<ReadingQuantity, string> = {
  voltage: 'Volts DC',
  current: 'Amps (clamp)',
  ripple: 'Ripple AC',
  rpm: 'Engine rpm',
  draw: 'Draw (ammeter)',
};

const selectClass = 'block w-full min-w-0 rounded-md border-0 bg-white py-1.5 pl-2 pr-7 text-sm text-slate-900 ring-1 ring-slate-300 focus:ring-2 focus:ring-live-500 aria-[invalid=true]:ring-stop-600';

export function RecordBar({
  tests,
  accessories,
  onAdd,
  disabled,
}: {
  tests: { test: DiagnosticTest; label: string }[];
  accessories: readonly AccessoryParams[];
  onAdd: (r: LocalReading) => void;
  disabled?: boolean;
}) {
  const engine = useBenchEngine();
  const procedure = useOpenTest(tests.map((t) => t.test));
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
    const setup = describeSetup(engine.getSnapshot().controls, meters, accessories);
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

  const error = formState.errors.quantity?.message ?? formState.errors.note?.message;
  return (
    <form onSubmit={record} aria-label="Record a reading" className="grid grid-cols-2 gap-1.5" noValidate>
      <label className="sr-only" htmlFor="record-test">
        Test
      </label>
      <select id="record-test" {...register('test')} className={selectClass}>
        {tests.map((t) => (
          <option key={t.test} value={t.test}>
            {SHORT_TEST_NAMES[t.test]}
          </option>
        ))}
      </select>
      <label className="sr-only" htmlFor="record-quantity">
        What was measured
      </label>
      <select id="record-quantity" {...register('quantity')} aria-invalid={formState.errors.quantity ? true : undefined} aria-describedby={error ? 'record-error' : undefined} className={selectClass}>
        {(Object.keys(QUANTITY_SHORT) as (keyof typeof QUANTITY_SHORT)[]).map((q) => (
          <option key={q} value={q}>
            {QUANTITY_SHORT[q]}
          </option>
        ))}
      </select>
      <label className="sr-only" htmlFor="record-note">
        Note (optional)
      </label>
      <div className="col-span-2 flex gap-1.5">
        <input id="record-note" placeholder="Note (optional)" {...register('note')} className={`${selectClass} min-w-0 flex-1 pr-2`} />
        <Button type="submit" disabled={disabled} data-testid="record-button" className="shrink-0 whitespace-nowrap">
          Record this reading
        </Button>
      </div>
      {error && (
        <p id="record-error" role="alert" className="col-span-2 text-xs font-medium text-stop-700">
          {error}
        </p>
      )}
    </form>
  );
}

export function ReadingsList({
  tests,
  readings,
  onRemove,
  disabled,
}: {
  tests: { test: DiagnosticTest; label: string }[];
  readings: LocalReading[];
  onRemove: (id: string) => void;
  disabled?: boolean;
}) {
  if (readings.length === 0) return <p className="text-sm text-slate-600">No readings recorded yet. Set up a test, then press “Record this reading” below.</p>;
  return (
    <ul className="divide-y divide-slate-100 text-sm" aria-label="Recorded readings">
      {readings.map((r) => (
        <li key={r.id} data-testid="recorded-reading" className="flex items-start gap-2 py-2">
          <span className="w-11 shrink-0 pt-0.5 font-mono text-xs text-slate-600">{formatClock(r.atMs)}</span>
          <span className="min-w-0 flex-1">
            <span className="flex flex-wrap items-baseline gap-x-2">
              <span className="whitespace-nowrap font-mono font-semibold text-slate-900">
                {r.value} {r.unit}
              </span>
              <span className="text-slate-700">{tests.find((t) => t.test === r.test)?.label ?? SHORT_TEST_NAMES[r.test]}</span>
            </span>
            <span className="block text-xs text-slate-600">{r.where}</span>
          </span>
          <Button variant="ghost" size="sm" disabled={disabled} onClick={() => onRemove(r.id)} aria-label={`Remove reading ${r.value} ${r.unit}`}>
            Remove
          </Button>
        </li>
      ))}
    </ul>
  );
}
