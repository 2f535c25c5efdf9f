/** The instructor's fault for one running bench: any fault of the model, its severity, a delay, an optional on/off pattern. */
import { useId, useState, type FormEvent } from 'react';
import { FAULT_KINDS, type FaultKind } from '../../../../sim/faults.ts';
import { FAULT_TEXT } from '../../../../shared/fault-catalogue-text.ts';
import { LIVE_BOUNDS } from '../../../../shared/api/live.ts';
import { Button } from '../../../components/ui/button.tsx';
import { SelectField, TextField } from '../../../components/ui/field.tsx';
import { ApiError } from '../../../lib/api-client.ts';
import { useInjectFault } from '../api/inject-fault.ts';

export function InjectForm({ attemptId, studentName, onDone }: { attemptId: number; studentName: string; onDone: () => void }) {
  const [kind, setKind] = useState<FaultKind>('fusible-link-open');
  const [severityPct, setSeverityPct] = useState('100');
  const [delayS, setDelayS] = useState('0');
  const [intermittent, setIntermittent] = useState(false);
  const [periodS, setPeriodS] = useState('10');
  const [onPct, setOnPct] = useState('50');
  const inject = useInjectFault();
  const checkboxId = useId();
  const err = inject.error instanceof ApiError ? inject.error : null;
  const fieldError = (f: string) => (err?.field === f ? err.message : undefined);

  function submit(e: FormEvent) {
    e.preventDefault();
    inject.mutate(
      {
        attemptId,
        kind,
        severity01: Number(severityPct) / 100,
        delayS: Number(delayS),
        intermittent: intermittent ? { periodS: Number(periodS), onFraction01: Number(onPct) / 100 } : null,
      },
      { onSuccess: onDone },
    );
  }

  return (
    <form onSubmit={submit} className="mt-3 space-y-3 rounded-lg bg-stone-50 p-3 ring-1 ring-slate-200" aria-label={`Inject a fault for ${studentName}`}>
      <SelectField label="Fault" value={kind} onChange={(e) => setKind(e.target.value as FaultKind)} error={fieldError('kind')} hint={FAULT_TEXT[kind].severityMeaning}>
        {FAULT_KINDS.map((k) => (
          <option key={k} value={k}>
            {FAULT_TEXT[k].label}
          </option>
        ))}
      </SelectField>
      <div className="grid grid-cols-2 gap-3">
        <TextField label="Severity (%)" type="number" min={0} max={100} step={5} value={severityPct} onChange={(e) => setSeverityPct(e.target.value)} error={fieldError('severity01')} />
        <TextField
          label="Delay (s of bench time)"
          type="number"
          min={LIVE_BOUNDS.delayS.min}
          max={LIVE_BOUNDS.delayS.max}
          step={1}
          value={delayS}
          onChange={(e) => setDelayS(e.target.value)}
          error={fieldError('delayS')}
        />
      </div>
      <div className="flex items-center gap-2">
        <input id={checkboxId} type="checkbox" checked={intermittent} onChange={(e) => setIntermittent(e.target.checked)} className="h-4 w-4 accent-live-600" />
        <label htmlFor={checkboxId} className="text-sm text-slate-800">
          Intermittent
        </label>
      </div>
      {intermittent && (
        <div className="grid grid-cols-2 gap-3">
          <TextField label="Period (s)" type="number" min={LIVE_BOUNDS.periodS.min} max={LIVE_BOUNDS.periodS.max} step={0.5} value={periodS} onChange={(e) => setPeriodS(e.target.value)} error={fieldError('intermittent.periodS')} />
          <TextField label="Present (% of each period)" type="number" min={5} max={100} step={5} value={onPct} onChange={(e) => setOnPct(e.target.value)} error={fieldError('intermittent.onFraction01')} />
        </div>
      )}
      {err && !err.field && (
        <p role="alert" className="text-sm text-stop-700">
          {err.message}
        </p>
      )}
      <div className="flex gap-2">
        <Button type="submit" disabled={inject.isPending}>
          {inject.isPending ? 'Injecting…' : 'Inject'}
        </Button>
        <Button variant="ghost" onClick={onDone}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
