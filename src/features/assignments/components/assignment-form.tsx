import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { z } from 'zod';
import { createAssignmentSchema, type CreateAssignmentInput } from '../../../../shared/api/assignments.ts';
import { Button } from '../../../components/ui/button.tsx';
import { ScheduleFields, scheduleDefaults, type PublishedScenarioChoice } from '../../../components/schedule-fields.tsx';
import { useCreateAssignment } from '../api/create-assignment.ts';
import { localToIso } from '../../../lib/local-dates.ts';

const formSchema = z
  .object({
    classId: z.number(),
    scenarioId: z.coerce.number<string>({ error: 'Choose a scenario' }).int().positive('Choose a scenario'),
    title: z.string(),
    opensAt: z.string().min(1, 'opensAt: choose when the assignment opens'),
    dueAt: z.string().min(1, 'dueAt: choose the due date'),
    attemptsAllowed: z.number({ error: 'Attempts allowed must be a number' }),
    showCurveAfter: z.boolean(),
    showFeedbackAfter: z.boolean(),
  })
  .transform(
    (v): CreateAssignmentInput => ({
      classId: v.classId,
      scenarioId: v.scenarioId,
      ...(v.title.trim() ? { title: v.title.trim() } : {}),
      opensAt: localToIso(v.opensAt),
      dueAt: localToIso(v.dueAt),
      attemptsAllowed: v.attemptsAllowed,
      showCurveAfter: v.showCurveAfter,
      showFeedbackAfter: v.showFeedbackAfter,
    }),
  )
  .pipe(createAssignmentSchema);

type FormInput = z.input<typeof formSchema>;

export function AssignmentForm({ classId, scenarios }: { classId: number; scenarios: readonly PublishedScenarioChoice[] }) {
  const create = useCreateAssignment();
  const defaults: FormInput = {
    ...scheduleDefaults(),
    classId,
    showCurveAfter: true,
    showFeedbackAfter: true,
  };
  const form = useForm<FormInput, unknown, CreateAssignmentInput>({ resolver: zodResolver(formSchema), defaultValues: defaults });
  return (
    <form
      noValidate
      aria-label="Assign a scenario"
      className="grid gap-4 sm:grid-cols-2"
      onSubmit={form.handleSubmit((payload) => create.mutate(payload, { onSuccess: () => form.reset({ ...defaults, scenarioId: '' }) }))}
    >
      <ScheduleFields
        form={form}
        scenarios={scenarios}
        titleLabel="Title shown to students (optional)"
      />
      <fieldset className="space-y-1 text-sm sm:col-span-2">
        <legend className="font-medium text-slate-800">After a student submits, show</legend>
        <label className="flex items-center gap-2">
          <input type="checkbox" {...form.register('showCurveAfter')} /> the output curve of the alternator they tested
        </label>
        <label className="flex items-center gap-2">
          <input type="checkbox" {...form.register('showFeedbackAfter')} /> feedback on their tests and diagnosis
        </label>
      </fieldset>
      <div className="flex items-center gap-3 sm:col-span-2">
        <Button type="submit" disabled={create.isPending}>
          Assign to the class
        </Button>
        <p role="status" aria-live="polite" className="text-sm">
          {create.error && <span className="text-stop-700">{create.error.message}</span>}
          {create.data && <span className="text-live-700">Assigned “{create.data.title}”.</span>}
        </p>
      </div>
    </form>
  );
}
