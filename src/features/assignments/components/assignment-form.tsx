import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { z } from 'zod';
import { createAssignmentSchema, type CreateAssignmentInput } from '../../../../shared/api/assignments.ts';
import { Button } from '../../../components/ui/button.tsx';
import { SelectField, TextField } from '../../../components/ui/field.tsx';
import { useCreateAssignment } from '../api/create-assignment.ts';
import { localToIso, localValue } from './local-dates.ts';

export interface AssignableScenario {
  id: number;
  title: string;
  publishedVersion: number | null;
}


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


export function AssignmentForm({ classId, scenarios }: { classId: number; scenarios: AssignableScenario[] }) {
  const create = useCreateAssignment();
  const now = new Date();
  now.setSeconds(0, 0);
  const defaults: FormInput = {
    classId,
    scenarioId: '',
    title: '',
    opensAt: localValue(now),
    dueAt: localValue(new Date(now.getTime() + 14 * 24 * 3600 * 1000)),
    attemptsAllowed: 3,
    showCurveAfter: true,
    showFeedbackAfter: true,
  };
  const form = useForm<FormInput, unknown, CreateAssignmentInput>({ resolver: zodResolver(formSchema), defaultValues: defaults });
  const e = form.formState.errors;
  const published = scenarios.filter((s) => s.publishedVersion !== null);
  return (
    <form
      noValidate
      aria-label="Assign a scenario"
      className="grid gap-4 sm:grid-cols-2"
      onSubmit={form.handleSubmit((payload) => create.mutate(payload, { onSuccess: () => form.reset({ ...defaults, scenarioId: '' }) }))}
    >
      <div className="sm:col-span-2">
        <SelectField label="Scenario (its published version)" {...form.register('scenarioId')} error={e.scenarioId?.message}>
          <option value="">Choose a published scenario</option>
          {published.map((s) => (
            <option key={s.id} value={s.id}>
              {s.title} (v{s.publishedVersion})
            </option>
          ))}
        </SelectField>
      </div>
      <TextField label="Title shown to students (optional)" placeholder="The scenario’s title" {...form.register('title')} error={e.title?.message} />
      <TextField label="Attempts allowed" type="number" min={1} max={20} {...form.register('attemptsAllowed', { valueAsNumber: true })} error={e.attemptsAllowed?.message} />
      <TextField label="Opens" type="datetime-local" {...form.register('opensAt')} error={e.opensAt?.message} />
      <TextField label="Due" type="datetime-local" {...form.register('dueAt')} error={e.dueAt?.message} />
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
