/**
 * The diagnosis: pass or fail for each test run, the fault picked from the
 * scenario's list, then submit. With no reading recorded, submitting asks
 * first: a diagnosis without evidence earns nothing.
 */
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import type { DiagnosticTest } from '../../../../sim/faults.ts';
import type { DiagnosisChoice } from '../../../../shared/scenario.ts';
import { diagnosisChoiceSchema } from '../../../../shared/scenario.ts';
import { Button } from '../../../components/ui/button.tsx';
import { SelectField } from '../../../components/ui/field.tsx';

const verdictValue = z.enum(['pass', 'fail', 'skip']);

const diagnosisFormSchema = z.object({
  verdicts: z.record(z.string(), verdictValue),
  faultKind: z.string().refine((v) => diagnosisChoiceSchema.safeParse(v).success, 'Pick the fault you found (or no fault)'),
  notes: z.string().max(2000, 'Notes must be at most 2000 characters'),
});
type DiagnosisFormValues = z.infer<typeof diagnosisFormSchema>;

export interface DiagnosisValues {
  verdicts: { test: DiagnosticTest; pass: boolean }[];
  faultKind: DiagnosisChoice;
  notes: string;
}

const when = (iso: string) => new Date(iso).toLocaleString('en-GB', { dateStyle: 'medium', timeStyle: 'short' });

export function DiagnosisForm({
  tests,
  choices,
  readingCount,
  resultsAt = null,
  submitting,
  error,
  onSubmit,
  submitLabel = 'Submit diagnosis',
}: {
  tests: { test: DiagnosticTest; label: string }[];
  choices: { value: DiagnosisChoice; label: string }[];
  readingCount: number;
  /** When results show, for an assignment that hides them until it closes. */
  resultsAt?: string | null;
  submitting: boolean;
  error: string | null;
  onSubmit: (values: DiagnosisValues) => void;
  submitLabel?: string;
}) {
  const form = useForm<DiagnosisFormValues>({
    resolver: zodResolver(diagnosisFormSchema),
    defaultValues: { verdicts: Object.fromEntries(tests.map((t) => [t.test, 'skip'])), faultKind: '', notes: '' },
  });
  const { register, handleSubmit, formState } = form;
  /** Waiting for the student to confirm a submission with no reading recorded. */
  const [confirming, setConfirming] = useState<DiagnosisValues | null>(null);
  const submit = handleSubmit((v) => {
    const verdicts = tests.flatMap((t) => {
      const given = v.verdicts[t.test];
      return given === 'pass' || given === 'fail' ? [{ test: t.test, pass: given === 'pass' }] : [];
    });
    const values = { verdicts, faultKind: v.faultKind as DiagnosisChoice, notes: v.notes };
    // An ungraded try-out has nothing to lose: only a graded submission asks first.
    if (readingCount === 0 && submitLabel === 'Submit diagnosis') setConfirming(values);
    else onSubmit(values);
  });
  return (
    <form onSubmit={submit} className="space-y-4" aria-label="Diagnosis">
      <fieldset>
        <legend className="mb-2 text-sm font-medium text-slate-800">Result of each test you ran</legend>
        <div className="divide-y divide-slate-100">
          {tests.map((t) => (
            <div key={t.test} role="radiogroup" aria-label={t.label} className="flex flex-wrap items-center justify-between gap-2 py-1.5 text-sm">
              <span className="text-slate-700">{t.label}</span>
              <span className="flex gap-3">
                {(['pass', 'fail', 'skip'] as const).map((v) => (
                  <label key={v} className="flex items-center gap-1 text-slate-600">
                    <input type="radio" value={v} {...register(`verdicts.${t.test}`)} className="accent-live-600" />
                    {v === 'pass' ? 'Pass' : v === 'fail' ? 'Fail' : 'Not run'}
                  </label>
                ))}
              </span>
            </div>
          ))}
        </div>
      </fieldset>
      <SelectField label="Fault found" {...register('faultKind')} error={formState.errors.faultKind?.message}>
        <option value="">Choose…</option>
        {choices.map((c) => (
          <option key={c.value} value={c.value}>
            {c.label}
          </option>
        ))}
      </SelectField>
      <div className="space-y-1">
        <label htmlFor="diagnosis-notes" className="block text-sm font-medium text-slate-800">
          Notes (optional)
        </label>
        <textarea
          id="diagnosis-notes"
          rows={3}
          {...register('notes')}
          className="block w-full rounded-md border-0 bg-white px-3 py-2 text-sm ring-1 ring-slate-300 focus:ring-2 focus:ring-live-500"
        />
      </div>
      {error && (
        <p role="alert" className="text-sm font-medium text-stop-700">
          {error}
        </p>
      )}
      {confirming ? (
        <div role="alertdialog" aria-labelledby="no-readings-title" className="space-y-2 rounded-md bg-warn-100 px-3 py-3 text-sm text-warn-700" data-testid="confirm-no-readings">
          <p id="no-readings-title" className="font-medium">
            You have recorded no readings. A diagnosis without readings taken inside each test’s set-up earns nothing. Submit anyway?
          </p>
          <div className="flex gap-2">
            <Button
              type="button"
              variant="secondary"
              disabled={submitting}
              onClick={() => {
                const values = confirming;
                setConfirming(null);
                onSubmit(values);
              }}
            >
              Submit without readings
            </Button>
            <Button type="button" variant="ghost" onClick={() => setConfirming(null)}>
              Back to the bench
            </Button>
          </div>
        </div>
      ) : (
        <div className="flex flex-wrap items-center gap-3">
          <Button type="submit" disabled={submitting}>
            {submitting ? 'Submitting…' : submitLabel}
          </Button>
          <span className="text-xs text-slate-500">
            {readingCount} reading{readingCount === 1 ? '' : 's'} recorded.{submitLabel === 'Submit diagnosis' ? ' Submitting ends the attempt.' : ''}
            {resultsAt ? ` Results show when the assignment closes, ${when(resultsAt)}.` : ''}
          </span>
        </div>
      )}
    </form>
  );
}
