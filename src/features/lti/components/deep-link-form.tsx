import { zodResolver } from '@hookform/resolvers/zod';
import { useEffect, useRef } from 'react';
import { useForm } from 'react-hook-form';
import { z } from 'zod';
import { deepLinkChoiceSchema, type DeepLinkChoice, type DeepLinkResponse, type DeepLinkView } from '../../../../shared/api/lti.ts';
import { Button } from '../../../components/ui/button.tsx';
import { SelectField, TextField } from '../../../components/ui/field.tsx';
import { useAnswerDeepLink } from '../api/answer-deep-link.ts';

export interface PickableScenario {
  id: number;
  title: string;
  publishedVersion: number | null;
}

const localToIso = (v: string) => {
  const t = Date.parse(v);
  return Number.isNaN(t) ? v : new Date(t).toISOString();
};

const formSchema = z
  .object({
    scenarioId: z.coerce.number<string>({ error: 'Choose a scenario' }).int().positive('Choose a scenario'),
    title: z.string(),
    opensAt: z.string().min(1, 'opensAt: choose when the activity opens'),
    dueAt: z.string().min(1, 'dueAt: choose the due date'),
    attemptsAllowed: z.number({ error: 'Attempts allowed must be a number' }),
  })
  .transform(
    (v): DeepLinkChoice => ({
      scenarioId: v.scenarioId,
      ...(v.title.trim() ? { title: v.title.trim() } : {}),
      opensAt: localToIso(v.opensAt),
      dueAt: localToIso(v.dueAt),
      attemptsAllowed: v.attemptsAllowed,
    }),
  )
  .pipe(deepLinkChoiceSchema);
type FormInput = z.input<typeof formSchema>;

const pad = (n: number) => String(n).padStart(2, '0');
const localValue = (d: Date) => `${d.getFullYear()}-${pad(d.getMonth() + 1)}-${pad(d.getDate())}T${pad(d.getHours())}:${pad(d.getMinutes())}`;

/** Posts the signed answer to the platform, as the Deep Linking flow asks: a form the browser submits. */
function ReturnToPlatform({ answer }: { answer: DeepLinkResponse }) {
  const ref = useRef<HTMLFormElement>(null);
  useEffect(() => {
    ref.current?.submit();
  }, [answer]);
  return (
    <form ref={ref} method="post" action={answer.returnUrl} aria-label="Return to the platform">
      <input type="hidden" name="JWT" value={answer.jwt} />
      <p className="text-sm text-slate-700" role="status">
        The activity is made; taking you back to your course…
      </p>
      <Button type="submit" variant="secondary" className="mt-2">
        Back to the course
      </Button>
    </form>
  );
}

export function DeepLinkForm({ request, scenarios }: { request: DeepLinkView; scenarios: PickableScenario[] }) {
  const answer = useAnswerDeepLink();
  const now = new Date();
  now.setSeconds(0, 0);
  const defaults: FormInput = {
    scenarioId: '',
    title: '',
    opensAt: localValue(now),
    dueAt: localValue(new Date(now.getTime() + 14 * 24 * 3600 * 1000)),
    attemptsAllowed: 3,
  };
  const form = useForm<FormInput, unknown, DeepLinkChoice>({ resolver: zodResolver(formSchema), defaultValues: defaults });
  const e = form.formState.errors;
  if (answer.data) return <ReturnToPlatform answer={answer.data} />;
  const published = scenarios.filter((s) => s.publishedVersion !== null);
  return (
    <form noValidate aria-label="Add a Loadline activity" className="grid gap-4 sm:grid-cols-2" onSubmit={form.handleSubmit((choice) => answer.mutate({ id: request.id, ...choice }))}>
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
      <TextField label="Title in the course (optional)" placeholder="The scenario’s title" {...form.register('title')} error={e.title?.message} />
      <TextField label="Attempts allowed" type="number" min={1} max={20} {...form.register('attemptsAllowed', { valueAsNumber: true })} error={e.attemptsAllowed?.message} />
      <TextField label="Opens" type="datetime-local" {...form.register('opensAt')} error={e.opensAt?.message} />
      <TextField label="Due" type="datetime-local" {...form.register('dueAt')} error={e.dueAt?.message} />
      <div className="flex items-center gap-3 sm:col-span-2">
        <Button type="submit" disabled={answer.isPending}>
          Add to the course
        </Button>
        <p role="status" aria-live="polite" className="text-sm">
          {answer.error && <span className="text-stop-700">{answer.error.message}</span>}
          {!answer.error && request.acceptsLineItem && <span className="text-slate-600">Grades go to a gradebook column of the same name.</span>}
        </p>
      </div>
    </form>
  );
}
