// @vitest-environment happy-dom
import { afterEach, describe, expect, it } from 'vitest';
import { cleanup, fireEvent, render, screen, waitFor } from '@testing-library/react';
import { useForm } from 'react-hook-form';
import { ScheduleFields, scheduleDefaults, type ScheduleValues } from '../../src/components/schedule-fields.tsx';
import { localToIso, localValue } from '../../src/lib/local-dates.ts';

afterEach(cleanup);

const scenarios = [
  { id: 4, title: 'Output test on the Linden', publishedVersion: 2 },
  { id: 7, title: 'A draft with no published version', publishedVersion: null },
];

function Harness({ onSubmit }: { onSubmit: (v: ScheduleValues) => void }) {
  const form = useForm<ScheduleValues>({ defaultValues: scheduleDefaults() });
  return (
    <form aria-label="schedule" onSubmit={form.handleSubmit(onSubmit)}>
      <ScheduleFields form={form} scenarios={scenarios} titleLabel="Title shown to students (optional)" />
      <button type="submit">Save</button>
    </form>
  );
}

describe('the scenario, attempts and dates of an assignment', () => {
  it('starts open from this minute, due two weeks later, with three attempts', () => {
    const d = scheduleDefaults();
    const after = Date.now();
    expect(d.scenarioId).toBe('');
    expect(d.attemptsAllowed).toBe(3);
    const opens = Date.parse(localToIso(d.opensAt));
    // The start of the minute it was made in.
    expect(opens).toBeLessThanOrEqual(after);
    expect(after - opens).toBeLessThan(60_000 + 1_000);
    expect(new Date(opens).getSeconds()).toBe(0);
    expect(Date.parse(localToIso(d.dueAt)) - opens).toBe(14 * 24 * 3600 * 1000);
  });

  it('offers only scenarios with a published version, named with it', () => {
    render(<Harness onSubmit={() => {}} />);
    const options = [...screen.getByLabelText('Scenario (its published version)').querySelectorAll('option')].map((o) => o.textContent);
    expect(options).toEqual(['Choose a published scenario', 'Output test on the Linden (v2)']);
  });

  it('hands the form its values, the attempts as a number', async () => {
    const got: ScheduleValues[] = [];
    render(<Harness onSubmit={(v) => got.push(v)} />);
    fireEvent.change(screen.getByLabelText('Scenario (its published version)'), { target: { value: '4' } });
    fireEvent.change(screen.getByLabelText('Attempts allowed'), { target: { value: '5' } });
    fireEvent.change(screen.getByLabelText('Due'), { target: { value: localValue(new Date(2027, 0, 15, 9, 30)) } });
    fireEvent.click(screen.getByRole('button', { name: 'Save' }));
    await waitFor(() => expect(got).toHaveLength(1));
    expect(got[0]).toMatchObject({ scenarioId: '4', attemptsAllowed: 5, dueAt: '2027-01-15T09:30' });
  });
});
