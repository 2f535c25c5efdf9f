import {
  createColumnHelper,
  flexRender,
  getCoreRowModel,
  getFilteredRowModel,
  getSortedRowModel,
  useReactTable,
  type ColumnFiltersState,
  type FilterFn,
  type SortingState,
} from '@tanstack/react-table';
import { useMemo, useState } from 'react';
import { Link, useNavigate } from 'react-router-dom';
import { FAULT_KINDS, type DiagnosticTest, type FaultKind } from '../../../../sim/faults.ts';
import { FAULT_TEXT } from '../../../../shared/fault-catalogue-text.ts';
import type { ScenarioListItem } from '../../../../shared/api/scenarios.ts';
import { DIAGNOSTIC_TEST_LABELS, DIAGNOSTIC_TESTS, DIFFICULTIES, DIFFICULTY_LABELS } from '../../../../shared/scenario.ts';
import { Button } from '../../../components/ui/button.tsx';
import { EmptyState } from '../../../components/ui/states.tsx';
import { useDuplicateScenario } from '../api/duplicate-scenario.ts';

const col = createColumnHelper<ScenarioListItem>();

const includesValue: FilterFn<ScenarioListItem> = (row, columnId, value: string) => {
  const cell = row.getValue<string[]>(columnId);
  return !value || cell.includes(value);
};

const textMatch: FilterFn<ScenarioListItem> = (row, _columnId, value: string) => {
  const needle = value.trim().toLowerCase();
  if (!needle) return true;
  const s = row.original;
  return [s.title, s.summary, s.vehicleName, s.vehicleKind, s.owner?.name ?? ''].some((t) => t.toLowerCase().includes(needle));
};

const difficultyOrder = { intro: 0, core: 1, advanced: 2 } as const;

function Badge({ children, tone = 'slate' }: { children: React.ReactNode; tone?: 'slate' | 'live' | 'warn' }) {
  const tones = { slate: 'bg-slate-100 text-slate-700', live: 'bg-live-50 text-live-700 ring-1 ring-live-100', warn: 'bg-warn-100 text-warn-700' };
  return <span className={`inline-block rounded px-1.5 py-0.5 text-xs font-medium ${tones[tone]}`}>{children}</span>;
}

function DuplicateButton({ scenario }: { scenario: ScenarioListItem }) {
  const duplicate = useDuplicateScenario();
  const navigate = useNavigate();
  return (
    <Button
      size="sm"
      variant="secondary"
      disabled={duplicate.isPending}
      onClick={() => duplicate.mutate(scenario.id, { onSuccess: (copy) => void navigate(`/scenarios/${copy.id}`) })}
    >
      {duplicate.isPending ? 'Copying…' : 'Duplicate'}
      <span className="sr-only"> {scenario.title}</span>
    </Button>
  );
}

export function ScenarioTable({ scenarios }: { scenarios: ScenarioListItem[] }) {
  const [sorting, setSorting] = useState<SortingState>([{ id: 'title', desc: false }]);
  const [columnFilters, setColumnFilters] = useState<ColumnFiltersState>([]);
  const [globalFilter, setGlobalFilter] = useState('');

  const columns = useMemo(
    () => [
      col.accessor('title', {
        header: 'Scenario',
        cell: (c) => (
          <div>
            <Link to={`/scenarios/${c.row.original.id}`} className="font-medium text-slate-900 underline-offset-2 hover:underline">
              {c.getValue()}
            </Link>
            {c.row.original.archived && (
              <span className="ml-2">
                <Badge tone="warn">Archived</Badge>
              </span>
            )}
            <p className="mt-0.5 line-clamp-1 max-w-md text-xs text-slate-500">{c.row.original.summary}</p>
          </div>
        ),
      }),
      col.accessor('vehicleName', {
        header: 'Vehicle',
        cell: (c) => (
          <span>
            {c.getValue()}
            <span className="block text-xs text-slate-500">
              {c.row.original.ratedCurrentA} A alternator
            </span>
          </span>
        ),
      }),
      col.accessor('difficulty', {
        header: 'Difficulty',
        sortingFn: (a, b) => difficultyOrder[a.original.difficulty] - difficultyOrder[b.original.difficulty],
        filterFn: 'equalsString',
        cell: (c) => DIFFICULTY_LABELS[c.getValue()],
      }),
      col.accessor('faultKinds', {
        header: 'Faults',
        enableSorting: false,
        filterFn: includesValue,
        cell: (c) =>
          c.getValue().length ? (
            <div className="flex flex-wrap gap-1">
              {c.getValue().map((k) => (
                <Badge key={k}>{FAULT_TEXT[k].label}</Badge>
              ))}
            </div>
          ) : (
            <Badge tone="live">Healthy control</Badge>
          ),
      }),
      col.accessor('testsExpected', {
        header: 'Tests expected',
        enableSorting: false,
        filterFn: includesValue,
        cell: (c) => <span className="text-xs text-slate-600">{c.getValue().length === 1 ? '1 test' : `${c.getValue().length} tests`}</span>,
      }),
      col.accessor((s) => s.publishedVersion ?? 0, {
        id: 'versions',
        header: 'Versions',
        cell: (c) => (
          <span className="text-xs">
            v{c.row.original.latestVersion}
            {c.row.original.publishedVersion ? (
              <span className="block text-live-700">v{c.row.original.publishedVersion} published</span>
            ) : (
              <span className="block text-warn-700">not published</span>
            )}
          </span>
        ),
      }),
      col.accessor((s) => s.owner?.name ?? '', {
        id: 'owner',
        header: 'Owner',
        cell: (c) => (
          <span className="text-xs">
            {c.getValue() || '—'}
            <span className="block text-slate-500">{c.row.original.visibility === 'private' ? 'Private' : 'Shared'}</span>
          </span>
        ),
      }),
      col.accessor('updatedAt', { header: 'Updated', cell: (c) => <span className="text-xs text-slate-600">{new Date(c.getValue()).toLocaleDateString()}</span> }),
      col.display({ id: 'actions', header: () => <span className="sr-only">Actions</span>, cell: (c) => <DuplicateButton scenario={c.row.original} /> }),
    ],
    [],
  );

  const table = useReactTable({
    data: scenarios,
    columns,
    state: { sorting, columnFilters, globalFilter },
    onSortingChange: setSorting,
    onColumnFiltersChange: setColumnFilters,
    onGlobalFilterChange: setGlobalFilter,
    globalFilterFn: textMatch,
    getCoreRowModel: getCoreRowModel(),
    getFilteredRowModel: getFilteredRowModel(),
    getSortedRowModel: getSortedRowModel(),
  });

  const filterValue = (id: string) => (columnFilters.find((f) => f.id === id)?.value as string | undefined) ?? '';
  const setFilter = (id: string, value: string) => table.getColumn(id)?.setFilterValue(value || undefined);
  const selectClass = 'rounded-md border-0 bg-white py-2 pl-3 pr-8 text-sm ring-1 ring-slate-300';
  const rows = table.getRowModel().rows;

  return (
    <div className="space-y-3">
      <div className="flex flex-wrap items-end gap-3" role="search" aria-label="Filter the library">
        <div>
          <label htmlFor="scenario-search" className="block text-xs font-medium text-slate-600">
            Search
          </label>
          <input
            id="scenario-search"
            type="search"
            value={globalFilter}
            onChange={(e) => setGlobalFilter(e.target.value)}
            placeholder="Title, complaint, vehicle"
            className="mt-1 w-64 rounded-md border-0 px-3 py-2 text-sm ring-1 ring-slate-300"
          />
        </div>
        <div>
          <label htmlFor="filter-fault" className="block text-xs font-medium text-slate-600">
            Fault
          </label>
          <select id="filter-fault" className={`mt-1 ${selectClass}`} value={filterValue('faultKinds')} onChange={(e) => setFilter('faultKinds', e.target.value)}>
            <option value="">Any fault</option>
            {FAULT_KINDS.map((k: FaultKind) => (
              <option key={k} value={k}>
                {FAULT_TEXT[k].label}
              </option>
            ))}
          </select>
        </div>
        <div>
          <label htmlFor="filter-test" className="block text-xs font-medium text-slate-600">
            Test expected
          </label>
          <select id="filter-test" className={`mt-1 ${selectClass}`} value={filterValue('testsExpected')} onChange={(e) => setFilter('testsExpected', e.target.value)}>
            <option value="">Any test</option>
            {DIAGNOSTIC_TESTS.map((t: DiagnosticTest) => (
              <option key={t} value={t}>
                {DIAGNOSTIC_TEST_LABELS[t]}
              </option>
            ))}
          </select>
        </div>
        <div>
          <label htmlFor="filter-difficulty" className="block text-xs font-medium text-slate-600">
            Difficulty
          </label>
          <select id="filter-difficulty" className={`mt-1 ${selectClass}`} value={filterValue('difficulty')} onChange={(e) => setFilter('difficulty', e.target.value)}>
            <option value="">Any difficulty</option>
            {DIFFICULTIES.map((d) => (
              <option key={d} value={d}>
                {DIFFICULTY_LABELS[d]}
              </option>
            ))}
          </select>
        </div>
        <p className="ml-auto text-sm text-slate-600" role="status" aria-live="polite">
          {rows.length} of {scenarios.length} scenarios
        </p>
      </div>

      {rows.length === 0 ? (
        <EmptyState title="No scenario matches these filters">Clear a filter or search for something else.</EmptyState>
      ) : (
        <div className="overflow-x-auto rounded-lg ring-1 ring-slate-200">
          <table className="stack-table min-w-full divide-y divide-slate-200 bg-white text-sm" aria-label="Scenarios">
            <thead className="bg-slate-50 text-left text-xs font-semibold uppercase tracking-wide text-slate-600">
              {table.getHeaderGroups().map((hg) => (
                <tr key={hg.id}>
                  {hg.headers.map((h) => {
                    const sorted = h.column.getIsSorted();
                    return (
                      <th key={h.id} scope="col" className="px-3 py-2" aria-sort={sorted === 'asc' ? 'ascending' : sorted === 'desc' ? 'descending' : undefined}>
                        {h.column.getCanSort() ? (
                          <button type="button" onClick={h.column.getToggleSortingHandler()} className="inline-flex items-center gap-1 uppercase hover:text-slate-800">
                            {flexRender(h.column.columnDef.header, h.getContext())}
                            <span aria-hidden="true">{sorted === 'asc' ? '▲' : sorted === 'desc' ? '▼' : '↕'}</span>
                          </button>
                        ) : (
                          flexRender(h.column.columnDef.header, h.getContext())
                        )}
                      </th>
                    );
                  })}
                </tr>
              ))}
            </thead>
            <tbody className="divide-y divide-slate-100">
              {rows.map((r) => (
                <tr key={r.id} className="align-top hover:bg-stone-50">
                  {r.getVisibleCells().map((c) => (
                    <td key={c.id} data-label={typeof c.column.columnDef.header === 'string' && c.column.getIndex() > 0 ? c.column.columnDef.header : undefined} className="px-3 py-2.5">
                      {flexRender(c.column.columnDef.cell, c.getContext())}
                    </td>
                  ))}
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </div>
  );
}
