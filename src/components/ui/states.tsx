import type { ReactNode } from 'react';
import { Link } from 'react-router-dom';
import { ApiError } from '../../lib/api-client.ts';

export function Spinner({ label = 'Loading' }: { label?: string }) {
  return (
    <div role="status" className="flex items-center gap-2 text-sm text-slate-500">
      <svg className="h-4 w-4 animate-spin" viewBox="0 0 24 24" aria-hidden="true">
        <circle cx="12" cy="12" r="9" fill="none" stroke="currentColor" strokeOpacity="0.25" strokeWidth="3" />
        <path d="M21 12a9 9 0 0 0-9-9" fill="none" stroke="currentColor" strokeWidth="3" strokeLinecap="round" />
      </svg>
      <span>{label}…</span>
    </div>
  );
}

/** Where a page sends someone who cannot use it. */
export interface WayBack {
  to: string;
  label: string;
}

/**
 * A failure, said plainly. With `what` (an attempt, a class…), a 404 says
 * that thing does not exist and a 403 that it is not the user's, each with a
 * way back instead of a retry that cannot help.
 */
export function ErrorState({ error, retry, what, back }: { error: unknown; retry?: () => void; what?: string; back?: WayBack }) {
  const message = error instanceof ApiError || error instanceof Error ? error.message : 'Something went wrong';
  const status = error instanceof ApiError ? error.status : null;
  if (what && (status === 404 || status === 403)) {
    return (
      <div role="alert" className="rounded-xl bg-white p-6 text-sm shadow-sm ring-1 ring-slate-200" data-testid="access-problem">
        <h1 className="text-lg font-semibold text-slate-900">{status === 404 ? `This ${what} does not exist` : `This ${what} is not yours to open`}</h1>
        <p className="mt-1 text-slate-700">
          {status === 404
            ? `There is no ${what} at this address: it may have been removed, or the link may be mistyped.`
            : `${/not yours/i.test(message) ? 'It belongs to someone else.' : `${message.replace(/\.$/, '')}.`} Ask your instructor or an admin if you need it.`}
        </p>
        {back && (
          <Link to={back.to} className="mt-4 inline-flex min-h-9 items-center rounded-md bg-slate-900 px-3.5 text-sm font-medium text-white hover:bg-slate-700">
            {back.label}
          </Link>
        )}
      </div>
    );
  }
  return (
    <div role="alert" className="rounded-lg border border-stop-600/30 bg-stop-100/60 p-4 text-sm text-stop-700">
      <p className="font-medium">That did not work</p>
      <p className="mt-1">{message}</p>
      <div className="mt-2 flex flex-wrap gap-4">
        {retry && (
          <button type="button" onClick={retry} className="font-medium underline underline-offset-2">
            Try again
          </button>
        )}
        {back && (
          <Link to={back.to} className="font-medium underline underline-offset-2">
            {back.label}
          </Link>
        )}
      </div>
    </div>
  );
}

export function EmptyState({ title, children }: { title: string; children?: ReactNode }) {
  return (
    <div className="rounded-lg border border-dashed border-slate-300 bg-white/60 p-8 text-center">
      <p className="font-medium text-slate-800">{title}</p>
      {children && <div className="mt-1 text-sm text-slate-500">{children}</div>}
    </div>
  );
}

export function PageHeader({ title, description, actions }: { title: string; description?: ReactNode; actions?: ReactNode }) {
  return (
    <div className="mb-6 flex flex-wrap items-end justify-between gap-4">
      <div>
        <h1 className="text-2xl font-semibold tracking-tight text-slate-900">{title}</h1>
        {description && <p className="mt-1 max-w-3xl text-sm text-slate-600">{description}</p>}
      </div>
      {actions && <div className="flex flex-wrap gap-2">{actions}</div>}
    </div>
  );
}

export function Panel({ title, children, className = '' }: { title?: ReactNode; children: ReactNode; className?: string }) {
  return (
    <section className={`rounded-xl bg-white p-5 shadow-sm ring-1 ring-slate-200 ${className}`}>
      {title && <h2 className="mb-3 text-sm font-semibold uppercase tracking-wide text-slate-500">{title}</h2>}
      {children}
    </section>
  );
}

/** The page's usual width and margins, for pages under a full-width workspace route (the bench). */
export function PageBody({ children }: { children: ReactNode }) {
  return <div className="mx-auto max-w-7xl px-4 py-6 sm:py-8">{children}</div>;
}
