/**
 * Recording readings in one action. The record bar takes the test from the
 * procedure in view and reads the meter that test's set-up names
 * (shared/test-setups.ts): "Record this reading" writes down what that meter
 * shows at this display tick; the student can pick another test, and with it
 * another meter. A line says whether the test's set-up holds now and, if not,
 * what is missing (the same check the grader makes): a reading taken outside
 * its set-up is kept, marked with the reason, and earns nothing. Each reading
 * goes into the attempt's log and shows "saved" once the server has stored it.
 */
import { useEffect } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import type { DiagnosticTest } from '../../../../sim/faults.ts';
import type { AccessoryParams } from '../../../../sim/params.ts';
import { MAX_READINGS, type RecordedReading } from '../../../../shared/api/attempts.ts';
import { shownWithUnit } from '../../../../shared/meter-display.ts';
import { diagnosticTestSchema } from '../../../../shared/scenario.ts';
import { Button } from '../../../components/ui/button.tsx';
import { useBench, useBenchEngine } from '../hooks/use-bench.ts';
import type { LoggedReading } from '../hooks/use-bench-session.ts';
import { QUANTITY_LABELS, TEST_QUANTITY, describeSetup, valueToRecord } from './reading-capture.ts';
import { SHORT_TEST_NAMES, useOpenTest } from './procedure-panel.tsx';

const recordFormSchema = z.object({
  test: diagnosticTestSchema,
  note: z.string().max(120, 'Keep the note under 120 characters'),
});
type RecordForm = z.infer<typeof recordFormSchema>;

function newId(): string {
  return globalThis.crypto?.randomUUID?.() ?? `r-${Date.now().toString(36)}-${Math.random().toString(36).slice(2, 10)}`;
}

export const formatClock = (ms: number) => `${String(Math.floor(ms / 60_000)).padStart(2, '0')}:${String(Math.floor((ms % 60_000) / 1000)).padStart(2, '0')}`;

const selectClass = 'block w-full min-w-0 rounded-md border-0 bg-white py-1.5 pl-2 pr-7 text-sm text-slate-900 ring-1 ring-slate-300 focus:ring-2 focus:ring-live-500 aria-[invalid=true]:ring-stop-600';

/** Whether the chosen test's set-up holds at this display tick, and what is missing: one short line. */
export function SetupStatusLine({ test }: { test: DiagnosticTest }) {
  const status = useBench(
    (s) => s.display.setups[test],
    (a, b) => a.holds === b.holds && a.unmet.join('|') === b.unmet.join('|'),
  );
  if (status.holds) {
    return (
      <p data-testid="setup-status" className="col-span-2 text-xs font-medium text-live-700">
        Set-up holds: this reading counts as evidence.
      </p>
    );
  }
  return (
    <p data-testid="setup-status" className="col-span-2 text-xs text-warn-700 max-sm:line-clamp-3" title={status.unmet.join('; ')}>
      <span className="font-semibold">Not the set-up yet</span> (a reading now earns nothing): {status.unmet.join('; ')}
    </p>
  );
}

export function RecordBar({
  tests,
  accessories,
  readingCount,
  onRecord,
  disabled,
}: {
  tests: { test: DiagnosticTest; label: string }[];
  accessories: readonly AccessoryParams[];
  readingCount: number;
  onRecord: (r: RecordedReading) => void;
  disabled?: boolean;
}) {
  const engine = useBenchEngine();
  const procedure = useOpenTest(tests.map((t) => t.test));
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
    if (readingCount >= MAX_READINGS) {
      setError('test', { message: `At most ${MAX_READINGS} readings: remove one first.` });
      return;
    }
    const setup = describeSetup(engine.getSnapshot().controls, meters, accessories);
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

  const error = formState.errors.test?.message ?? formState.errors.note?.message;
  return (
    <form onSubmit={record} aria-label="Record a reading" className="grid grid-cols-2 gap-1.5" noValidate>
      <label className="sr-only" htmlFor="record-test">
        Test
      </label>
      <select id="record-test" {...register('test')} aria-invalid={formState.errors.test ? true : undefined} aria-describedby={error ? 'record-error' : undefined} className={selectClass}>
        {tests.map((t) => (
          <option key={t.test} value={t.test}>
            {SHORT_TEST_NAMES[t.test]}
          </option>
        ))}
      </select>
      <p className="self-center truncate text-xs text-slate-600" data-testid="record-reads">
        Reads: {QUANTITY_LABELS[TEST_QUANTITY[test] ?? 'voltage']}
      </p>
      <SetupStatusLine test={test} />
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
  showSaved = true,
}: {
  tests: { test: DiagnosticTest; label: string }[];
  readings: readonly LoggedReading[];
  onRemove: (id: string) => void;
  disabled?: boolean;
  /** Whether each reading says if the server has stored it (a try-out stores nothing). */
  showSaved?: boolean;
}) {
  if (readings.length === 0) return <p className="text-sm text-slate-600">No readings recorded yet. Set up a test, then press “Record this reading” below.</p>;
  return (
    <ul className="divide-y divide-slate-100 text-sm" aria-label="Recorded readings">
      {readings.map(({ reading: r, stored }) => (
        <li key={r.id} data-testid="recorded-reading" className="flex items-start gap-2 py-2">
          <span className="w-11 shrink-0 pt-0.5 font-mono text-xs text-slate-600">{formatClock(r.atMs)}</span>
          <span className="min-w-0 flex-1">
            <span className="flex flex-wrap items-baseline gap-x-2">
              <span className="whitespace-nowrap font-mono font-semibold text-slate-900" data-testid="recorded-value">
                {shownWithUnit(r.value, r.unit)}
              </span>
              <span className="text-slate-700">{tests.find((t) => t.test === r.test)?.label ?? SHORT_TEST_NAMES[r.test]}</span>
              {showSaved && (
                <span className="text-xs text-slate-600" data-testid="reading-saved">
                  {stored ? 'saved' : 'saving…'}
                </span>
              )}
            </span>
            <span className="block text-xs text-slate-600">{r.where}</span>
          </span>
          <Button variant="ghost" size="sm" disabled={disabled} onClick={() => onRemove(r.id)} aria-label={`Remove reading ${shownWithUnit(r.value, r.unit)}`}>
            Remove
          </Button>
        </li>
      ))}
    </ul>
  );
}
