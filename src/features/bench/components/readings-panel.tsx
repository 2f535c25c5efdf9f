/**
 * Recording readings: pick the test; the panel says whether its set-up holds
 * now and, if not, what is missing (shared/test-setups.ts, the same check the
 * grader makes); "Record this reading" writes down what the meter shows at
 * this display tick. A reading taken outside its set-up is kept, marked with
 * the reason, and earns nothing. Each reading goes into the attempt's log and
 * shows "saved" once the server has stored it.
 */
import { useEffect } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import type { DiagnosticTest } from '../../../../sim/faults.ts';
import { MAX_READINGS, type RecordedReading } from '../../../../shared/api/attempts.ts';
import { shownWithUnit } from '../../../../shared/meter-display.ts';
import { diagnosticTestSchema } from '../../../../shared/scenario.ts';
import { Button } from '../../../components/ui/button.tsx';
import { SelectField, TextField } from '../../../components/ui/field.tsx';
import { useBench, useBenchEngine } from '../hooks/use-bench.ts';
import type { LoggedReading } from '../hooks/use-bench-session.ts';
import { useBenchUi } from '../stores/bench-ui-store.ts';
import { QUANTITY_LABELS, TEST_QUANTITY, describeSetup, valueToRecord } from './reading-capture.ts';

const recordFormSchema = z.object({
  test: diagnosticTestSchema,
  note: z.string().max(120, 'Keep the note under 120 characters'),
});
type RecordForm = z.infer<typeof recordFormSchema>;

function newId(): string {
  return globalThis.crypto?.randomUUID?.() ?? `r-${Date.now().toString(36)}-${Math.random().toString(36).slice(2, 10)}`;
}

const formatTime = (ms: number) => `${String(Math.floor(ms / 60_000)).padStart(2, '0')}:${String(Math.floor((ms % 60_000) / 1000)).padStart(2, '0')}`;

/** Whether the chosen test's set-up holds at this display tick, and what is missing. */
function SetupStatusNote({ test }: { test: DiagnosticTest }) {
  const status = useBench(
    (s) => s.display.setups[test],
    (a, b) => a.holds === b.holds && a.unmet.join('|') === b.unmet.join('|'),
  );
  if (status.holds) {
    return (
      <p data-testid="setup-status" className="rounded-md bg-live-50 px-3 py-2 text-sm text-live-700">
        The set-up for this test holds: a reading now counts as evidence.
      </p>
    );
  }
  return (
    <div data-testid="setup-status" className="rounded-md bg-warn-100 px-3 py-2 text-sm text-warn-700">
      <p className="font-medium">Not yet the test’s set-up: a reading now is kept but earns nothing.</p>
      <ul className="mt-1 list-disc pl-5">
        {status.unmet.map((u) => (
          <li key={u}>{u}</li>
        ))}
      </ul>
    </div>
  );
}

export function ReadingsPanel({
  tests,
  readings,
  onRecord,
  onRemove,
  disabled,
}: {
  tests: { test: DiagnosticTest; label: string }[];
  readings: readonly LoggedReading[];
  onRecord: (r: RecordedReading) => void;
  onRemove: (id: string) => void;
  disabled?: boolean;
}) {
  const engine = useBenchEngine();
  const procedure = useBenchUi((s) => s.procedure);
  const form = useForm<RecordForm>({
    resolver: zodResolver(recordFormSchema),
    defaultValues: { test: procedure, note: '' },
  });
  const { register, handleSubmit, setValue, setError, formState, watch } = form;
  const test = watch('test');

  // Follow the procedure tab the student has open.
  useEffect(() => {
    setValue('test', procedure);
  }, [procedure, setValue]);

  const record = handleSubmit((values) => {
    const { atMs, readings: meters, setups } = engine.readNow();
    const taken = valueToRecord(values.test, meters, setups[values.test]);
    if (!taken) {
      setError('test', { message: values.test === 'cranking' ? 'No crank yet: crank the engine with the leads on the battery posts.' : 'That meter shows no reading now: check the hook-up.' });
      return;
    }
    if (readings.length >= MAX_READINGS) {
      setError('test', { message: `At most ${MAX_READINGS} readings: remove one first.` });
      return;
    }
    const setup = describeSetup(engine.getSnapshot().controls, meters);
    onRecord({
      id: newId(),
      test: values.test,
      quantity: TEST_QUANTITY[values.test],
      value: taken.value,
      unit: taken.unit,
      atMs,
      where: (values.note ? `${values.note} — ${setup}` : setup).slice(0, 200),
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
        <p className="self-end pb-2 text-sm text-slate-600">Reads: {QUANTITY_LABELS[TEST_QUANTITY[test] ?? 'voltage']}</p>
        <div className="sm:col-span-2">
          <SetupStatusNote test={test} />
        </div>
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
              <th className="py-1 font-medium">
                <span className="sr-only">Saved</span>
              </th>
              <th className="py-1">
                <span className="sr-only">Remove</span>
              </th>
            </tr>
          </thead>
          <tbody className="divide-y divide-slate-100">
            {readings.map(({ reading: r, stored }) => (
              <tr key={r.id} data-testid="recorded-reading">
                <td className="py-1.5 font-mono text-xs text-slate-500">{formatTime(r.atMs)}</td>
                <td className="py-1.5 text-slate-700">{tests.find((t) => t.test === r.test)?.label ?? r.test}</td>
                <td className="whitespace-nowrap py-1.5 text-right font-mono font-semibold text-slate-900" data-testid="recorded-value">
                  {shownWithUnit(r.value, r.unit)}
                </td>
                <td className="max-w-56 truncate py-1.5 pl-3 text-xs text-slate-500" title={r.where}>
                  {r.where}
                </td>
                <td className="py-1.5 pl-2 text-xs text-slate-500" data-testid="reading-saved">
                  {stored ? 'saved' : 'saving…'}
                </td>
                <td className="py-1.5 text-right">
                  <Button variant="ghost" size="sm" disabled={disabled} onClick={() => onRemove(r.id)} aria-label={`Remove reading ${shownWithUnit(r.value, r.unit)}`}>
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
