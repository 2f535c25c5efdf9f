/**
 * One assignment after it is set: change its dates, attempts and title; see
 * every student of the class on it (not started, started, submitted); give
 * one student a later due date or more attempts.
 */
import { useState } from 'react';
import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { Link } from 'react-router-dom';
import { z } from 'zod';
import { PROGRESS_LABELS, updateAssignmentSchema, type Assignment, type AssignmentStudent, type StudentProgress, type UpdateAssignmentInput } from '../../../../shared/api/assignments.ts';
import { Button } from '../../../components/ui/button.tsx';
import { TextField } from '../../../components/ui/field.tsx';
import { ErrorState, Spinner } from '../../../components/ui/states.tsx';
import { paths } from '../../../config/paths.ts';
import { useAssignmentStudents, useRemoveExtension, useSetExtension, useUpdateAssignment } from '../api/manage-assignment.ts';
import { localToIso, localValue, when } from '../../../lib/local-dates.ts';

const editSchema = z
  .object({
    title: z.string(),
    opensAt: z.string().min(1, 'Choose when the assignment opens'),
    dueAt: z.string().min(1, 'Choose the due date'),
    attemptsAllowed: z.number({ error: 'Attempts allowed must be a number' }),
    showCurveAfter: z.boolean(),
    showFeedbackAfter: z.boolean(),
  })
  .transform(
    (v): UpdateAssignmentInput => ({
      title: v.title.trim(),
      opensAt: localToIso(v.opensAt),
      dueAt: localToIso(v.dueAt),
      attemptsAllowed: v.attemptsAllowed,
      showCurveAfter: v.showCurveAfter,
      showFeedbackAfter: v.showFeedbackAfter,
    }),
  )
  .pipe(updateAssignmentSchema);
type EditInput = z.input<typeof editSchema>;

function EditAssignmentForm({ assignment, update }: { assignment: Assignment; update: ReturnType<typeof useUpdateAssignment> }) {
  const defaults: EditInput = {
    title: assignment.title,
    opensAt: localValue(new Date(assignment.opensAt)),
    dueAt: localValue(new Date(assignment.dueAt)),
    attemptsAllowed: assignment.attemptsAllowed,
    showCurveAfter: assignment.showCurveAfter,
    showFeedbackAfter: assignment.showFeedbackAfter,
  };
  const form = useForm<EditInput, unknown, UpdateAssignmentInput>({ resolver: zodResolver(editSchema), defaultValues: defaults });
  const e = form.formState.errors;
  return (
    <form noValidate aria-label="Change the assignment" className="grid gap-3 sm:grid-cols-2" onSubmit={form.handleSubmit((input) => update.mutate({ id: assignment.id, ...input }))}>
      <div className="sm:col-span-2">
        <TextField label="Title shown to students" {...form.register('title')} error={e.title?.message} />
      </div>
      <TextField label="Opens" type="datetime-local" {...form.register('opensAt')} error={e.opensAt?.message} />
      <TextField label="Due" type="datetime-local" {...form.register('dueAt')} error={e.dueAt?.message} />
      <TextField label="Attempts allowed" type="number" min={1} max={20} {...form.register('attemptsAllowed', { valueAsNumber: true })} error={e.attemptsAllowed?.message} />
      <fieldset className="space-y-1 text-sm">
        <legend className="font-medium text-slate-800">After a student submits, show</legend>
        <label className="flex items-center gap-2">
          <input type="checkbox" {...form.register('showCurveAfter')} /> the output curve
        </label>
        <label className="flex items-center gap-2">
          <input type="checkbox" {...form.register('showFeedbackAfter')} /> feedback on tests and diagnosis
        </label>
      </fieldset>
      <div className="flex flex-wrap items-center gap-3 sm:col-span-2">
        <Button type="submit" disabled={update.isPending}>
          Save changes
        </Button>
      </div>
    </form>
  );
}

const extendSchema = z
  .object({ dueAt: z.string(), extraAttempts: z.number({ error: 'Extra attempts must be a number' }).int('Extra attempts must be a whole number').min(0, 'Extra attempts must not be negative').max(20, 'At most 20 extra attempts') })
  .refine((v) => v.dueAt !== '' || v.extraAttempts > 0, { path: ['dueAt'], message: 'Give a later due date, extra attempts, or both' });
type ExtendInput = z.infer<typeof extendSchema>;

function ExtendForm({ assignment, student, onDone }: { assignment: Assignment; student: AssignmentStudent; onDone: () => void }) {
  const extend = useSetExtension();
  const later = new Date(Math.max(Date.parse(student.dueAt), Date.now()) + 3 * 24 * 3600 * 1000);
  const form = useForm<ExtendInput>({
    resolver: zodResolver(extendSchema),
    defaultValues: { dueAt: localValue(student.extension?.dueAt ? new Date(student.extension.dueAt) : later), extraAttempts: student.extension?.extraAttempts ?? 0 },
  });
  const e = form.formState.errors;
  return (
    <form
      noValidate
      aria-label={`Extend ${student.name}`}
      className="mt-2 grid gap-3 rounded-lg bg-stone-50 p-3 ring-1 ring-slate-200 sm:grid-cols-[1fr_9rem_auto] sm:items-end"
      onSubmit={form.handleSubmit((v) =>
        extend.mutate(
          { assignmentId: assignment.id, studentId: student.studentId, dueAt: v.dueAt ? localToIso(v.dueAt) : null, extraAttempts: v.extraAttempts },
          { onSuccess: onDone },
        ),
      )}
    >
      <TextField label={`Own due date for ${student.name}`} type="datetime-local" {...form.register('dueAt')} error={e.dueAt?.message} />
      <TextField label="Extra attempts" type="number" min={0} max={20} {...form.register('extraAttempts', { valueAsNumber: true })} error={e.extraAttempts?.message} />
      <div className="flex gap-2">
        <Button type="submit" disabled={extend.isPending}>
          Extend
        </Button>
        <Button variant="ghost" onClick={onDone}>
          Cancel
        </Button>
      </div>
      {extend.error && (
        <p role="alert" className="text-sm text-stop-700 sm:col-span-3">
          {extend.error.message}
        </p>
      )}
    </form>
  );
}

const PROGRESS_TONE: Record<StudentProgress, string> = {
  'not-started': 'bg-warn-100 text-warn-700',
  'in-progress': 'bg-live-50 text-live-700',
  submitted: 'bg-slate-100 text-slate-700',
};

type Filter = 'all' | 'not-started' | 'not-submitted';

function StudentsOnAssignment({ assignment }: { assignment: Assignment }) {
  const q = useAssignmentStudents(assignment.id);
  const remove = useRemoveExtension();
  const [extending, setExtending] = useState<number | null>(null);
  const [filter, setFilter] = useState<Filter>('all');
  if (q.isPending) return <Spinner label="Loading the students" />;
  if (q.isError) return <ErrorState error={q.error} retry={() => void q.refetch()} />;
  const list = q.data;
  const count = (p: StudentProgress) => list.filter((s) => s.progress === p).length;
  const shown = list.filter((s) => filter === 'all' || (filter === 'not-started' ? s.progress === 'not-started' : s.progress !== 'submitted'));
  const filters: { key: Filter; label: string }[] = [
    { key: 'all', label: `Everyone (${list.length})` },
    { key: 'not-started', label: `Not started (${count('not-started')})` },
    { key: 'not-submitted', label: `Not submitted (${list.length - count('submitted')})` },
  ];
  return (
    <div className="space-y-3">
      <p className="text-sm text-slate-700" data-testid="assignment-progress-summary">
        {count('submitted')} submitted, {count('in-progress')} started but not submitted, {count('not-started')} not started.
      </p>
      <div role="group" aria-label="Show" className="flex flex-wrap gap-1.5">
        {filters.map((f) => (
          <button
            key={f.key}
            type="button"
            aria-pressed={filter === f.key}
            onClick={() => setFilter(f.key)}
            className={`min-h-8 rounded-md px-2.5 text-sm font-medium ring-1 ${filter === f.key ? 'bg-slate-900 text-white ring-slate-900' : 'bg-white text-slate-700 ring-slate-300 hover:bg-slate-50'}`}
          >
            {f.label}
          </button>
        ))}
      </div>
      {shown.length === 0 ? (
        <p className="text-sm text-slate-600">Nobody here.</p>
      ) : (
        <ul className="divide-y divide-slate-100 rounded-lg bg-white ring-1 ring-slate-200" aria-label={`Students on ${assignment.title}`}>
          {shown.map((s) => (
            <li key={s.studentId} className="px-3 py-2.5" data-testid="assignment-student">
              <div className="flex flex-wrap items-center gap-x-3 gap-y-1">
                <span className="min-w-0 flex-1 basis-40">
                  <span className="block font-medium text-slate-900">{s.name}</span>
                  <span className="block text-xs text-slate-600">
                    {s.attemptsUsed} of {s.attemptsAllowed} {s.attemptsAllowed === 1 ? 'attempt' : 'attempts'} used · due {when(s.dueAt)}
                    {s.extension && ' (extended)'}
                  </span>
                </span>
                <span className={`rounded-full px-2 py-0.5 text-xs font-medium ${PROGRESS_TONE[s.progress]}`}>{PROGRESS_LABELS[s.progress]}</span>
                <span className="flex flex-wrap gap-1">
                  {s.latestAttemptId !== null && (
                    <Link to={paths.replay.href(s.latestAttemptId)} className="inline-flex min-h-8 items-center rounded-md px-2.5 text-sm font-medium text-slate-700 hover:bg-slate-200/70">
                      Replay<span className="sr-only"> {s.name}’s latest attempt</span>
                    </Link>
                  )}
                  <Button size="sm" variant="secondary" onClick={() => setExtending(extending === s.studentId ? null : s.studentId)} aria-expanded={extending === s.studentId}>
                    Extend…<span className="sr-only"> {s.name}</span>
                  </Button>
                  {s.extension && (
                    <Button size="sm" variant="ghost" disabled={remove.isPending} onClick={() => remove.mutate({ assignmentId: assignment.id, studentId: s.studentId })}>
                      Remove extension<span className="sr-only"> of {s.name}</span>
                    </Button>
                  )}
                </span>
              </div>
              {extending === s.studentId && <ExtendForm assignment={assignment} student={s} onDone={() => setExtending(null)} />}
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}

export function AssignmentManager({ assignment, onClose }: { assignment: Assignment; onClose: () => void }) {
  const update = useUpdateAssignment();
  return (
    <section aria-labelledby="manage-heading" className="rounded-xl bg-white p-5 shadow-sm ring-2 ring-live-500/40" data-testid="assignment-manager">
      <div className="mb-4 flex flex-wrap items-start justify-between gap-3">
        <div>
          <h2 id="manage-heading" className="text-lg font-semibold text-slate-900">
            {assignment.title}
          </h2>
          <p className="text-sm text-slate-600">
            Opens {when(assignment.opensAt)} · due {when(assignment.dueAt)} · {assignment.attemptsAllowed} {assignment.attemptsAllowed === 1 ? 'attempt' : 'attempts'}
          </p>
        </div>
        <Button variant="ghost" onClick={onClose}>
          Close
        </Button>
      </div>
      <div className="grid gap-6 lg:grid-cols-2">
        <div>
          <h3 className="mb-2 text-sm font-semibold uppercase tracking-wide text-slate-600">Dates and attempts</h3>
          <EditAssignmentForm key={`${assignment.id}-${assignment.dueAt}-${assignment.opensAt}-${assignment.attemptsAllowed}`} assignment={assignment} update={update} />
          <p role="status" aria-live="polite" className="mt-2 text-sm">
            {update.error && <span className="text-stop-700">{update.error.message}</span>}
            {update.isSuccess && !update.isPending && (
              <span className="text-live-700">
                Saved: due {when(update.data.dueAt)}, {update.data.attemptsAllowed} {update.data.attemptsAllowed === 1 ? 'attempt' : 'attempts'}.
              </span>
            )}
          </p>
        </div>
        <div>
          <h3 className="mb-2 text-sm font-semibold uppercase tracking-wide text-slate-600">Students</h3>
          <StudentsOnAssignment assignment={assignment} />
        </div>
      </div>
    </section>
  );
}
