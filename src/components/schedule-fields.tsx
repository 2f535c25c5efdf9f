import type { FieldErrors, FieldValues, Path, UseFormReturn } from 'react-hook-form';
import { localValue } from '../lib/local-dates.ts';
import { SelectField, TextField } from './ui/field.tsx';

/** A scenario as the pickers list it: only one with a published version can be assigned. */
export interface PublishedScenarioChoice {
  id: number;
  title: string;
  publishedVersion: number | null;
}

/** The form values these fields edit (date-times as the inputs show them, in local time). */
export interface ScheduleValues {
  scenarioId: string;
  title: string;
  opensAt: string;
  dueAt: string;
  attemptsAllowed: number;
}

/** What a new assignment starts with: open from this minute, due in two weeks, three attempts. */
export function scheduleDefaults(): ScheduleValues {
  const now = new Date();
  now.setSeconds(0, 0);
  return { scenarioId: '', title: '', opensAt: localValue(now), dueAt: localValue(new Date(now.getTime() + 14 * 24 * 3600 * 1000)), attemptsAllowed: 3 };
}

/**
 * The scenario, title, attempts and dates of an assignment, as both the class
 * page's form and a learning platform's "add activity" picker ask for them.
 * `form` is a form whose values include ScheduleValues.
 */
export function ScheduleFields<T extends FieldValues & ScheduleValues, U>({
  form,
  scenarios,
  titleLabel,
}: {
  form: UseFormReturn<T, unknown, U>;
  scenarios: readonly PublishedScenarioChoice[];
  titleLabel: string;
}) {
  const field = (name: keyof ScheduleValues, numeric = false) => form.register(name as Path<T>, numeric ? { valueAsNumber: true } : {});
  const errors = form.formState.errors as FieldErrors<ScheduleValues>;
  const published = scenarios.filter((s) => s.publishedVersion !== null);
  return (
    <>
      <div className="sm:col-span-2">
        <SelectField label="Scenario (its published version)" {...field('scenarioId')} error={errors.scenarioId?.message}>
          <option value="">Choose a published scenario</option>
          {published.map((s) => (
            <option key={s.id} value={s.id}>
              {s.title} (v{s.publishedVersion})
            </option>
          ))}
        </SelectField>
      </div>
      <TextField label={titleLabel} placeholder="The scenario’s title" {...field('title')} error={errors.title?.message} />
      <TextField label="Attempts allowed" type="number" min={1} max={20} {...field('attemptsAllowed', true)} error={errors.attemptsAllowed?.message} />
      <TextField label="Opens" type="datetime-local" {...field('opensAt')} error={errors.opensAt?.message} />
      <TextField label="Due" type="datetime-local" {...field('dueAt')} error={errors.dueAt?.message} />
    </>
  );
}
