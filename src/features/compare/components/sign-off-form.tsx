/** Sign off one competency for a student, from one of their graded attempts. */
import { useState, type FormEvent } from 'react';
import { COMPETENCIES, COMPETENCY_LABELS, type Competency } from '../../../../shared/competencies.ts';
import { Button } from '../../../components/ui/button.tsx';
import { SelectField, TextField } from '../../../components/ui/field.tsx';
import { ApiError } from '../../../lib/api-client.ts';
import { useCreateSignOff } from '../api/create-sign-off.ts';

export function SignOffForm({ attemptId, studentName, onDone }: { attemptId: number; studentName: string; onDone: () => void }) {
  const [competency, setCompetency] = useState<Competency>('output');
  const [note, setNote] = useState('');
  const sign = useCreateSignOff();
  const err = sign.error instanceof ApiError ? sign.error : null;
  const [done, setDone] = useState<string | null>(null);

  function submit(e: FormEvent) {
    e.preventDefault();
    sign.mutate(
      { attemptId, competency, note },
      {
        onSuccess: () => {
          setDone(`${COMPETENCY_LABELS[competency]} signed off for ${studentName}`);
          setNote('');
        },
      },
    );
  }

  return (
    <form onSubmit={submit} className="mt-2 space-y-2 rounded-lg bg-stone-50 p-3 text-left ring-1 ring-slate-200" aria-label={`Sign off a competency for ${studentName}`}>
      <SelectField label="Competency" value={competency} onChange={(e) => setCompetency(e.target.value as Competency)} error={err?.field === 'competency' ? err.message : undefined}>
        {COMPETENCIES.map((c) => (
          <option key={c} value={c}>
            {COMPETENCY_LABELS[c]}
          </option>
        ))}
      </SelectField>
      <TextField label="Note" value={note} maxLength={500} onChange={(e) => setNote(e.target.value)} error={err?.field === 'note' ? err.message : undefined} />
      {err && err.field !== 'competency' && err.field !== 'note' && (
        <p role="alert" className="text-sm text-stop-700">
          {err.message}
        </p>
      )}
      {done && (
        <p role="status" className="text-sm text-live-700">
          {done}
        </p>
      )}
      <div className="flex gap-2">
        <Button type="submit" size="sm" disabled={sign.isPending}>
          Sign off
        </Button>
        <Button size="sm" variant="ghost" onClick={onDone}>
          Close
        </Button>
      </div>
    </form>
  );
}
