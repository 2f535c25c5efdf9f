import { useId, useState } from 'react';
import type { RosterRow } from '../../../../shared/api/classes.ts';
import { ApiError } from '../../../lib/api-client.ts';
import { Button } from '../../../components/ui/button.tsx';
import { useImportRoster, usePreviewRoster } from '../api/roster-upload.ts';

/** What the import will do with each line (the preview comes before anything is written). */
const statusText: Record<RosterRow['status'], string> = {
  new: 'New student: will be invited',
  existing: 'Existing student: will be enrolled',
  enrolled: 'Already in the class: nothing to do',
  error: 'Error',
};

/** Roster CSV: preview every line with its errors, then import all or nothing. */
export function RosterUpload({ classId }: { classId: number }) {
  const inputId = useId();
  const [file, setFile] = useState<File | null>(null);
  const preview = usePreviewRoster();
  const commit = useImportRoster();
  const data = preview.data;
  const failure = preview.error ?? commit.error;

  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-end gap-3">
        <div>
          <label htmlFor={inputId} className="block text-sm font-medium text-slate-800">
            Roster file (CSV)
          </label>
          <input
            id={inputId}
            type="file"
            accept=".csv,text/csv"
            aria-describedby={`${inputId}-hint`}
            className="mt-1 block text-sm file:mr-3 file:rounded-md file:border-0 file:bg-slate-900 file:px-3 file:py-1.5 file:text-sm file:font-medium file:text-white"
            onChange={(e) => {
              const f = e.target.files?.[0] ?? null;
              setFile(f);
              commit.reset();
              if (f) preview.mutate({ classId, file: f });
              else preview.reset();
            }}
          />
          <p id={`${inputId}-hint`} className="mt-1 text-xs text-slate-500">
            A header line <code className="font-mono">name,email</code> (or first name, last name, email), then one student per line.
          </p>
        </div>
      </div>

      {preview.isPending && <p className="text-sm text-slate-500">Checking the file…</p>}
      {failure && (
        <div role="alert" className="rounded-lg bg-stop-100/60 p-3 text-sm text-stop-700">
          <p className="font-medium">{commit.error ? 'Nothing was imported' : 'The file cannot be read'}</p>
          <p>{failure.message}</p>
          {failure instanceof ApiError && failure.issues && failure.issues.length > 1 && (
            <ul className="mt-1 list-disc pl-5 text-xs">
              {failure.issues.map((i) => (
                <li key={i.path}>
                  {i.path}: {i.message}
                </li>
              ))}
            </ul>
          )}
        </div>
      )}

      {data && (
        <div className="space-y-3">
          <p className="text-sm text-slate-700" role="status">
            {data.fileName}: {data.newCount} new (will be invited), {data.existingCount} existing (will be enrolled), {data.alreadyEnrolledCount} already enrolled,{' '}
            <span className={data.errorCount ? 'font-medium text-stop-700' : ''}>
              {data.errorCount} {data.errorCount === 1 ? 'line' : 'lines'} with errors
            </span>
            .
          </p>
          <div className="max-h-80 overflow-auto rounded-lg ring-1 ring-slate-200">
            <table className="stack-table min-w-full divide-y divide-slate-200 bg-white text-sm" aria-label="Roster preview">
              <thead className="sticky top-0 bg-slate-50 text-left text-xs font-semibold uppercase tracking-wide text-slate-500">
                <tr>
                  <th scope="col" className="px-3 py-2">Line</th>
                  <th scope="col" className="px-3 py-2">Name</th>
                  <th scope="col" className="px-3 py-2">E-mail</th>
                  <th scope="col" className="px-3 py-2">Result</th>
                </tr>
              </thead>
              <tbody className="divide-y divide-slate-100">
                {data.rows.map((r) => (
                  <tr key={r.line} className={r.status === 'error' ? 'bg-stop-100/40' : ''}>
                    <td data-label="Line" className="px-3 py-1.5 font-mono text-xs">{r.line}</td>
                    <td data-label="Name" className="px-3 py-1.5">{r.name || <span className="text-slate-500">—</span>}</td>
                    <td data-label="E-mail" className="break-all px-3 py-1.5 text-slate-600">{r.email || <span className="text-slate-500">—</span>}</td>
                    <td data-label="Result" className="px-3 py-1.5">
                      {r.status === 'error' ? <span className="font-medium text-stop-700">{r.message}</span> : <span className="text-slate-700">{statusText[r.status]}</span>}
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
          <div className="flex flex-wrap items-center gap-3">
            <Button disabled={!file || data.errorCount > 0 || commit.isPending || commit.isSuccess || data.newCount + data.existingCount === 0} onClick={() => file && commit.mutate({ classId, file })}>
              {commit.isPending ? 'Importing…' : `Import ${data.newCount + data.existingCount} ${data.newCount + data.existingCount === 1 ? 'student' : 'students'}`}
            </Button>
            {data.errorCount > 0 && <p className="text-sm text-stop-700">Fix the lines with errors and choose the file again: an import is all or nothing.</p>}
            {commit.data && (
              <p role="status" className="text-sm text-live-700">
                Imported: {commit.data.created} new accounts, {commit.data.enrolled} enrolled, {commit.data.invited} invitations sent.
              </p>
            )}
          </div>
        </div>
      )}
    </div>
  );
}
