import { useEffect, useId, useMemo, useState } from 'react';
import SortableHeader from './SortableHeader';
import { QueryClient, QueryClientProvider, keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import {
  createColumnHelper, flexRender, getCoreRowModel, useReactTable,
  type RowSelectionState, type SortingState,
} from '@tanstack/react-table';
import type { BulkAnswer, BulkInput, StudioWorkRow, StudioWorksList, WorkSort } from '~/lib/studio-schemas';

type Props = { initial: StudioWorksList };
type StatusFilter = 'all' | 'draft' | 'published';
interface ListParams { sort: WorkSort; dir: 'asc' | 'desc'; status: StatusFilter; series: string; q: string }

const DEFAULT_PARAMS: ListParams = { sort: 'updated', dir: 'desc', status: 'all', series: '', q: '' };

async function answerOf<T>(response: Response): Promise<T> {
  const body = await response.json().catch(() => null);
  if (!response.ok) throw new Error(body?.error?.message ?? `The Studio could not answer (${response.status}).`);
  return body as T;
}

async function fetchWorks(params: ListParams): Promise<StudioWorksList> {
  const search = new URLSearchParams();
  for (const [key, value] of Object.entries(params)) if (value !== '') search.set(key, value);
  return answerOf(await fetch(`/api/studio/works?${search}`, { headers: { Accept: 'application/json' } }));
}

async function postBulk(input: BulkInput): Promise<BulkAnswer> {
  return answerOf(
    await fetch('/api/studio/works/bulk', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(input) }),
  );
}

function useDebounced<T>(value: T, ms: number): T {
  const [settled, setSettled] = useState(value);
  useEffect(() => {
    const timer = setTimeout(() => setSettled(value), ms);
    return () => clearTimeout(timer);
  }, [value, ms]);
  return settled;
}

// Dates are shown in UTC so the server-rendered table and the hydrated one agree.
const dateFormat = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', year: 'numeric', timeZone: 'UTC' });

/** The Studio's list of works: sortable, filterable, with bulk publish, unpublish and series moves. */
export default function StudioWorksTable({ initial }: Props) {
  const [client] = useState(() => new QueryClient({ defaultOptions: { queries: { retry: 1, refetchOnWindowFocus: false, staleTime: 10_000 } } }));
  return (
    <QueryClientProvider client={client}>
      <WorksTable initial={initial} />
    </QueryClientProvider>
  );
}

const column = createColumnHelper<StudioWorkRow>();

function WorksTable({ initial }: Props) {
  const id = useId();
  const queryClient = useQueryClient();
  const [sorting, setSorting] = useState<SortingState>([{ id: 'updated', desc: true }]);
  const [status, setStatus] = useState<StatusFilter>('all');
  const [series, setSeries] = useState('');
  const [text, setText] = useState('');
  const q = useDebounced(text.trim(), 250);
  const [rowSelection, setRowSelection] = useState<RowSelectionState>({});
  const [target, setTarget] = useState('');
  const [answer, setAnswer] = useState<BulkAnswer | null>(null);

  const params: ListParams = {
    sort: (sorting[0]?.id ?? 'updated') as WorkSort,
    dir: sorting[0]?.desc === false ? 'asc' : 'desc',
    status,
    series,
    q,
  };
  const isDefault = JSON.stringify(params) === JSON.stringify(DEFAULT_PARAMS);
  const works = useQuery({
    queryKey: ['studio-works', params],
    queryFn: () => fetchWorks(params),
    initialData: isDefault ? initial : undefined,
    placeholderData: keepPreviousData,
  });
  const rows = works.data?.works ?? [];
  const seriesList = works.data?.series ?? initial.series;

  const bulk = useMutation({
    mutationFn: postBulk,
    onSuccess: async (result) => {
      setAnswer(result);
      setRowSelection({});
      await queryClient.invalidateQueries({ queryKey: ['studio-works'] });
    },
  });

  const columns = useMemo(
    () => [
      column.display({
        id: 'select',
        header: ({ table }) => (
          <input
            type="checkbox"
            aria-label="Select every work shown"
            checked={table.getIsAllRowsSelected()}
            ref={(el) => { if (el) el.indeterminate = table.getIsSomeRowsSelected(); }}
            onChange={table.getToggleAllRowsSelectedHandler()}
            className="accent-[rgb(var(--ember))]"
          />
        ),
        cell: ({ row }) => (
          <input
            type="checkbox"
            aria-label={`Select “${row.original.title}”`}
            checked={row.getIsSelected()}
            onChange={row.getToggleSelectedHandler()}
            className="accent-[rgb(var(--ember))]"
          />
        ),
      }),
      column.display({
        id: 'thumb',
        header: () => <span className="sr-only">Picture</span>,
        cell: ({ row }) => {
          const t = row.original.thumb;
          return (
            <img src={t.src} alt="" width={t.width} height={t.height} loading="lazy" className="h-12 w-16 bg-mat object-contain" />
          );
        },
      }),
      column.accessor('title', {
        header: 'Title',
        cell: ({ row }) => (
          <span>
            <a href={`/studio/works/${row.original.id}`} className="font-medium no-underline hover:text-ember">{row.original.title}</a>
            {!row.original.hasAltText && <span className="block text-xs text-ember">No alt text yet</span>}
          </span>
        ),
      }),
      column.accessor('status', {
        header: 'Status',
        cell: ({ getValue }) => (
          <span className={`rounded-full border px-2 py-0.5 text-xs ${getValue() === 'published' ? 'border-ink text-ink' : 'border-rule text-ink-soft'}`}>
            {getValue() === 'published' ? 'Published' : 'Draft'}
          </span>
        ),
      }),
      column.accessor((r) => r.series?.title ?? '', { id: 'series', header: 'Series', cell: ({ getValue }) => getValue() || <span className="text-ink-soft">—</span> }),
      column.accessor('offers', { header: 'Print offers', cell: ({ getValue }) => <span className="tabular-nums">{getValue()}</span> }),
      column.accessor('sales', { header: 'Sales', cell: ({ getValue }) => <span className="tabular-nums">{getValue()}</span> }),
      column.accessor('updatedAt', {
        id: 'updated',
        header: 'Updated',
        cell: ({ getValue }) => <time dateTime={getValue()} className="whitespace-nowrap">{dateFormat.format(new Date(getValue()))}</time>,
      }),
    ],
    [],
  );

  const table = useReactTable({
    data: rows,
    columns,
    state: { sorting, rowSelection },
    getRowId: (row) => String(row.id),
    onSortingChange: (updater) => {
      setSorting(updater);
    },
    onRowSelectionChange: setRowSelection,
    getCoreRowModel: getCoreRowModel(),
    manualSorting: true,
    enableMultiSort: false,
    enableSortingRemoval: false,
    sortDescFirst: false,
  });
  const selected = table.getSelectedRowModel().rows.map((r) => r.original);

  function run(action: BulkInput['action']) {
    if (!selected.length) return;
    setAnswer(null);
    const input: BulkInput = { ids: selected.map((w) => w.id), action };
    if (action === 'assign-series') input.seriesId = target === 'none' ? null : Number(target);
    bulk.mutate(input);
  }

  const failed = answer?.results.filter((r) => !r.ok) ?? [];
  return (
    <div className="space-y-5" data-testid="studio-works">
      <div className="flex flex-wrap items-end gap-3">
        <label className="min-w-[14rem] flex-1">
          <span className="eyebrow mb-1 block">Find</span>
          <input
            type="search"
            className="field"
            value={text}
            onChange={(e) => setText(e.target.value)}
            placeholder="Title, caption or keyword"
          />
        </label>
        <label>
          <span className="eyebrow mb-1 block">Status</span>
          <select className="field w-auto" value={status} onChange={(e) => setStatus(e.target.value as StatusFilter)}>
            <option value="all">All works</option>
            <option value="draft">Drafts</option>
            <option value="published">Published</option>
          </select>
        </label>
        <label>
          <span className="eyebrow mb-1 block">Series</span>
          <select className="field w-auto" value={series} onChange={(e) => setSeries(e.target.value)}>
            <option value="">Any series</option>
            <option value="none">Outside any series</option>
            {seriesList.map((s) => <option key={s.id} value={s.id}>{s.title}</option>)}
          </select>
        </label>
      </div>

      <div
        className="flex flex-wrap items-center gap-3 rounded-sm border border-rule bg-paper-raised px-4 py-3 text-sm"
        role="group"
        aria-label="With the selected works"
      >
        <span className="min-w-[7rem] text-ink-soft" aria-live="polite">{selected.length ? `${selected.length} selected` : 'None selected'}</span>
        <button type="button" className="btn-primary" disabled={!selected.length || bulk.isPending} onClick={() => run('publish')}>Publish</button>
        <button type="button" className="btn-quiet" disabled={!selected.length || bulk.isPending} onClick={() => run('unpublish')}>Return to draft</button>
        <span className="flex items-center gap-2">
          <label htmlFor={`${id}-target`} className="text-ink-soft">Move to</label>
          <select id={`${id}-target`} className="field w-auto py-1.5" value={target} onChange={(e) => setTarget(e.target.value)}>
            <option value="">Choose a series…</option>
            {seriesList.map((s) => <option key={s.id} value={s.id}>{s.title}</option>)}
            <option value="none">No series</option>
          </select>
          <button type="button" className="btn-quiet" disabled={!selected.length || !target || bulk.isPending} onClick={() => run('assign-series')}>Move</button>
        </span>
      </div>

      {(answer || bulk.isError) && (
        <div role="status" className={`rounded-sm border p-4 text-sm ${failed.length || bulk.isError ? 'border-ember' : 'border-rule'}`} data-testid="bulk-answer">
          {bulk.isError ? <p>{bulk.error.message}</p> : <p className="font-medium">{answer!.summary}.</p>}
          {failed.length > 0 && (
            <ul className="mt-2 list-disc space-y-1 pl-5 text-ink-soft">
              {failed.map((r) => (
                <li key={r.id}>
                  {r.title ? <a href={`/studio/works/${r.id}`} className="text-ink">{r.title}</a> : `Work ${r.id}`}: {r.message}
                </li>
              ))}
            </ul>
          )}
        </div>
      )}

      {works.isError ? (
        <div role="alert" className="rounded-sm border border-ember p-4 text-sm">
          <p>{works.error.message}</p>
          <button type="button" className="btn-quiet mt-3" onClick={() => works.refetch()}>Try again</button>
        </div>
      ) : (
        <div className={`overflow-x-auto ${works.isFetching ? 'opacity-70 transition-opacity' : ''}`} aria-busy={works.isFetching}>
          <table className="w-full border-collapse text-sm">
            <thead>
              {table.getHeaderGroups().map((group) => (
                <tr key={group.id} className="border-b border-rule text-left">
                  {group.headers.map((header) => (
                    <SortableHeader key={header.id} header={header} sortable={header.column.getCanSort() && header.column.id !== 'select' && header.column.id !== 'thumb'} />
                  ))}
                </tr>
              ))}
            </thead>
            <tbody>
              {table.getRowModel().rows.map((row) => (
                <tr key={row.id} className={`border-b border-rule ${row.getIsSelected() ? 'bg-paper-raised' : ''}`} data-testid="work-row">
                  {row.getVisibleCells().map((cell) => (
                    <td key={cell.id} className="px-2 py-2 align-middle">{flexRender(cell.column.columnDef.cell, cell.getContext())}</td>
                  ))}
                </tr>
              ))}
            </tbody>
          </table>
          {rows.length === 0 && !works.isFetching && (
            <p className="py-10 text-center text-ink-soft">{isDefault ? 'No works yet.' : 'No works match these filters.'}</p>
          )}
        </div>
      )}
    </div>
  );
}
