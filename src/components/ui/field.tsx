import { useId, type InputHTMLAttributes, type ReactNode, type SelectHTMLAttributes } from 'react';

const inputClass =
  'block w-full rounded-md border-0 bg-white px-3 py-2 text-sm text-slate-900 ring-1 ring-slate-300 placeholder:text-slate-500 focus:ring-2 focus:ring-live-500 aria-[invalid=true]:ring-stop-600';

interface FieldShellProps {
  label: string;
  error?: string | undefined;
  hint?: ReactNode;
  children: (ids: { id: string; describedBy: string | undefined }) => ReactNode;
}

export function FieldShell({ label, error, hint, children }: FieldShellProps) {
  const id = useId();
  const hintId = hint ? `${id}-hint` : undefined;
  const errorId = error ? `${id}-error` : undefined;
  const describedBy = [hintId, errorId].filter(Boolean).join(' ') || undefined;
  return (
    <div className="space-y-1">
      <label htmlFor={id} className="block text-sm font-medium text-slate-800">
        {label}
      </label>
      {children({ id, describedBy })}
      {hint && (
        <p id={hintId} className="text-xs text-slate-500">
          {hint}
        </p>
      )}
      {error && (
        <p id={errorId} className="text-xs font-medium text-stop-700" role="alert">
          {error}
        </p>
      )}
    </div>
  );
}

export function TextField({
  label,
  error,
  hint,
  ref,
  ...props
}: InputHTMLAttributes<HTMLInputElement> & { label: string; error?: string | undefined; hint?: ReactNode; ref?: React.Ref<HTMLInputElement> }) {
  return (
    <FieldShell label={label} error={error} hint={hint}>
      {({ id, describedBy }) => (
        <input id={id} ref={ref} aria-invalid={error ? true : undefined} aria-describedby={describedBy} className={inputClass} {...props} />
      )}
    </FieldShell>
  );
}

export function SelectField({
  label,
  error,
  hint,
  children,
  ref,
  ...props
}: SelectHTMLAttributes<HTMLSelectElement> & { label: string; error?: string | undefined; hint?: ReactNode; ref?: React.Ref<HTMLSelectElement> }) {
  return (
    <FieldShell label={label} error={error} hint={hint}>
      {({ id, describedBy }) => (
        <select id={id} ref={ref} aria-invalid={error ? true : undefined} aria-describedby={describedBy} className={inputClass} {...props}>
          {children}
        </select>
      )}
    </FieldShell>
  );
}
