import { zodResolver } from '@hookform/resolvers/zod';
import { useEffect, useRef } from 'react';
import { useForm } from 'react-hook-form';
import { z } from 'zod';
import { deepLinkChoiceSchema, type DeepLinkChoice, type DeepLinkResponse, type DeepLinkView } from '../../../../shared/api/lti.ts';
import { Button } from '../../../components/ui/button.tsx';
import { ScheduleFields, scheduleDefaults, type PublishedScenarioChoice } from '../../../components/schedule-fields.tsx';
import { localToIso } from '../../../lib/local-dates.ts';
import { useAnswerDeepLink } from '../api/answer-deep-link.ts';

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

export function DeepLinkForm({ request, scenarios }: { request: DeepLinkView; scenarios: readonly PublishedScenarioChoice[] }) {
  const answer = useAnswerDeepLink();
  const defaults: FormInput = scheduleDefaults();
  const form = useForm<FormInput, unknown, DeepLinkChoice>({ resolver: zodResolver(formSchema), defaultValues: defaults });
  if (answer.data) return <ReturnToPlatform answer={answer.data} />;
  return (
    <form noValidate aria-label="Add a Loadline activity" className="grid gap-4 sm:grid-cols-2" onSubmit={form.handleSubmit((choice) => answer.mutate({ id: request.id, ...choice }))}>
      <ScheduleFields
        form={form}
        scenarios={scenarios}
        titleLabel="Title in the course (optional)"
      />
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
