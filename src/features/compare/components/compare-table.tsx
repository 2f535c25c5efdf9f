/** Every counted student of an assignment, sortable by any column. */
import { useMemo, useState, type ReactNode } from 'react';
import { Link } from 'react-router-dom';
import { createColumnHelper, flexRender, getCoreRowModel, getSortedRowModel, useReactTable, type SortingState } from '@tanstack/react-table';
import { FAULT_KINDS, type FaultKind } from '../../../../sim/faults.ts';
import { FAULT_TEXT } from '../../../../shared/fault-catalogue-text.ts';
import { mistakeLabel } from '../../../../shared/api/attempts.ts';
import type { CompareRow } from '../../../../shared/api/compare.ts';
import { paths } from '../../../config/paths.ts';

export const formatMinutes = (ms: number | null) => (ms === null ? '—' : `${(ms / 60_000).toFixed(1)} min`);

const faultName = (k: string | null) => (k === null ? '—' : k === 'none' ? 'No fault' : (FAULT_KINDS as readonly string[]).includes(k) ? FAULT_TEXT[k as FaultKind].label : 'Another fault');

const col = createColumnHelper<CompareRow>();

export function CompareTable({ rows, action }: { rows: readonly CompareRow[]; action?: (row: CompareRow) => ReactNode }) {
  const [sorting, setSorting] = useState<SortingState>([{ id: 'timeToDiagnosisMs', desc: false }]);
  const columns = useMemo(
    () => [
      col.accessor('studentName', { header: 'Student' }),
      col.accessor('timeToDiagnosisMs', { header: 'Time to diagnosis', cell: (c) => formatMinutes(c.getValue()), sortUndefined: 'last' }),
      col.accessor((r) => (r.correct === null ? -1 : r.correct ? 1 : 0), { id: 'correct', header: 'Correct', cell: (c) => (c.row.original.correct === null ? '—' : c.row.original.correct ? 'Yes' : 'No') }),
      col.accessor((r) => faultName(r.faultGiven), { id: 'faultGiven', header: 'Fault named' }),
      col.accessor((r) => r.grade ?? -1, { id: 'grade', header: 'Grade', cell: (c) => (c.row.original.grade === null ? '—' : Math.round(c.row.original.grade)) }),
      col.accessor('mistakes', { header: 'Mistakes', cell: (c) => (c.getValue() ? `${c.getValue()} (${c.row.original.mistakeKinds.map(mistakeLabel).join(', ')})` : '0') }),
      col.accessor((r) => r.hintsOpened ?? -1, { id: 'hintsOpened', header: 'Hints opened', cell: (c) => c.row.original.hintsOpened ?? '—' }),
      col.accessor('attemptCount', { header: 'Attempts' }),
      col.accessor((r) => (r.verified ? 1 : 0), { id: 'verified', header: 'Readings verified', cell: (c) => (c.row.original.verified ? 'Yes' : 'No') }),
    ],
    [],
  );
  const table = useReactTable({
    data: rows as CompareRow[],
    columns,
    state: { sorting },
    onSortingChange: setSorting,
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
  });
  return (
    <div className="overflow-x-auto rounded-xl bg-white shadow-sm ring-1 ring-slate-200">
      <table className="stack-table min-w-full text-sm" aria-label="Students of the assignment">
        <thead className="bg-stone-50 text-left text-slate-600">
          {table.getHeaderGroups().map((hg) => (
            <tr key={hg.id}>
              {hg.headers.map((h) => {
                const dir = h.column.getIsSorted();
                return (
                  <th key={h.id} scope="col" aria-sort={dir === 'asc' ? 'ascending' : dir === 'desc' ? 'descending' : 'none'} className="px-3 py-2 font-medium">
                    <button type="button" onClick={h.column.getToggleSortingHandler()} className="inline-flex items-center gap-1 hover:text-slate-900">
                      {flexRender(h.column.columnDef.header, h.getContext())}
                      <span aria-hidden="true" className="text-xs">
                        {dir === 'asc' ? '▲' : dir === 'desc' ? '▼' : '↕'}
                      </span>
                    </button>
                  </th>
                );
              })}
              <th scope="col" className="px-3 py-2 font-medium">
                <span className="sr-only">Actions</span>
              </th>
            </tr>
          ))}
        </thead>
        <tbody className="divide-y divide-slate-100">
          {table.getRowModel().rows.map((row) => (
            <tr key={row.id}>
              {row.getVisibleCells().map((cell) => (
                <td
                  key={cell.id}
                  data-label={cell.column.id === 'studentName' ? undefined : typeof cell.column.columnDef.header === 'string' ? cell.column.columnDef.header : undefined}
                  className={`px-3 py-2 ${cell.column.id === 'timeToDiagnosisMs' ? 'font-mono' : ''} ${cell.column.id === 'studentName' ? 'font-medium' : ''}`}
                >
                  {flexRender(cell.column.columnDef.cell, cell.getContext())}
                </td>
              ))}
              <td className="whitespace-nowrap px-3 py-2 max-sm:pt-1.5">
                <Link to={paths.replay.href(row.original.attemptId)} className="font-medium text-live-700 underline underline-offset-2">
                  Replay<span className="sr-only"> {row.original.studentName}’s attempt</span>
                </Link>
                {action?.(row.original)}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
