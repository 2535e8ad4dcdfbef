import { useEffect, useMemo, useState } from 'react';
import SortableHeader from './SortableHeader';
import { QueryClient, QueryClientProvider, keepPreviousData, useQuery } from '@tanstack/react-query';
import { createColumnHelper, flexRender, getCoreRowModel, useReactTable, type PaginationState, type SortingState } from '@tanstack/react-table';
import {
  DEFAULT_ORDERS_QUERY, PAGE_SIZES, ordersQueryFrom, ordersQuerySearch,
  type DispatchOrderList, type DispatchOrderRow, type DispatchOrdersQuery, type OrderSort,
} from '~/lib/dispatch-schemas';
import { KIND_LABEL, ORDER_KINDS, ORDER_STATES, STATE_LABEL, type OrderKind, type OrderState } from '~/lib/order-states';
import { formatMoney } from '~/lib/money';

type Props = { initial: DispatchOrderList; initialQuery: DispatchOrdersQuery };

async function fetchOrders(query: DispatchOrdersQuery): Promise<DispatchOrderList> {
  const response = await fetch(`/api/dispatch/orders?${ordersQuerySearch(query)}`, { headers: { Accept: 'application/json' } });
  const body = await response.json().catch(() => null);
  if (!response.ok) throw new Error(body?.error?.message ?? `Dispatch could not answer (${response.status}).`);
  return body as DispatchOrderList;
}

function useDebounced<T>(value: T, ms: number): T {
  const [settled, setSettled] = useState(value);
  useEffect(() => {
    const timer = setTimeout(() => setSettled(value), ms);
    return () => clearTimeout(timer);
  }, [value, ms]);
  return settled;
}

// Dates are shown in UTC so the server-rendered table and the hydrated one agree (and match the UTC day filters).
const dateFormat = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', year: 'numeric', hour: '2-digit', minute: '2-digit', timeZone: 'UTC' });

/** Dispatch's order list: server-side paging, sorting and filters, all kept in the address bar so a view can be shared. */
export default function DispatchOrdersTable(props: Props) {
  const [client] = useState(() => new QueryClient({ defaultOptions: { queries: { retry: 1, refetchOnWindowFocus: false, staleTime: 10_000 } } }));
  return (
    <QueryClientProvider client={client}>
      <OrdersTable {...props} />
    </QueryClientProvider>
  );
}

const column = createColumnHelper<DispatchOrderRow>();

function OrdersTable({ initial, initialQuery }: Props) {
  const [filters, setFilters] = useState({
    state: initialQuery.state ?? '',
    kind: initialQuery.kind ?? '',
    from: initialQuery.from ?? '',
    to: initialQuery.to ?? '',
  });
  const [text, setText] = useState(initialQuery.q ?? '');
  const q = useDebounced(text.trim(), 300);
  const [sorting, setSorting] = useState<SortingState>([{ id: initialQuery.sort, desc: initialQuery.dir === 'desc' }]);
  const [pagination, setPagination] = useState<PaginationState>({ pageIndex: initialQuery.page - 1, pageSize: initialQuery.pageSize });

  const dateProblem = filters.from && filters.to && filters.from > filters.to ? 'The first day must not come after the last.' : null;
  const query: DispatchOrdersQuery = {
    ...DEFAULT_ORDERS_QUERY,
    page: pagination.pageIndex + 1,
    pageSize: pagination.pageSize,
    sort: (sorting[0]?.id ?? 'createdAt') as OrderSort,
    dir: sorting[0]?.desc === false ? 'asc' : 'desc',
    state: (filters.state || undefined) as OrderState | undefined,
    kind: (filters.kind || undefined) as OrderKind | undefined,
    from: filters.from || undefined,
    to: dateProblem ? undefined : filters.to || undefined,
    q: q || undefined,
  };
  const search = ordersQuerySearch(query).toString();
  const isInitial = search === ordersQuerySearch(initialQuery).toString();

  // The address bar follows the view, so copying it shares exactly this list.
  useEffect(() => {
    const next = `${window.location.pathname}${search ? `?${search}` : ''}`;
    if (next !== `${window.location.pathname}${window.location.search}`) window.history.replaceState(null, '', next);
  }, [search]);

  // Back/forward to an older view of the list (or a pasted link in the same tab) restores its filters.
  useEffect(() => {
    function restore() {
      const parsed = ordersQueryFrom(new URLSearchParams(window.location.search));
      const v = parsed.success ? parsed.data : DEFAULT_ORDERS_QUERY;
      setFilters({ state: v.state ?? '', kind: v.kind ?? '', from: v.from ?? '', to: v.to ?? '' });
      setText(v.q ?? '');
      setSorting([{ id: v.sort, desc: v.dir === 'desc' }]);
      setPagination({ pageIndex: v.page - 1, pageSize: v.pageSize });
    }
    window.addEventListener('popstate', restore);
    return () => window.removeEventListener('popstate', restore);
  }, []);

  const orders = useQuery({
    queryKey: ['dispatch-orders', search],
    queryFn: () => fetchOrders(query),
    initialData: isInitial ? initial : undefined,
    placeholderData: keepPreviousData,
  });
  const data = orders.data ?? initial;
  const pageCount = Math.max(1, Math.ceil(data.total / data.pageSize));

  /** A filter change starts again from the first page. */
  function setFilter(key: keyof typeof filters, value: string) {
    setFilters((f) => ({ ...f, [key]: value }));
    setPagination((p) => ({ ...p, pageIndex: 0 }));
  }

  const columns = useMemo(
    () => [
      column.accessor('number', {
        header: 'Order',
        cell: ({ getValue }) => (
          <a href={`/dispatch/orders/${encodeURIComponent(getValue())}`} className="font-medium tabular-nums no-underline hover:text-ember">{getValue()}</a>
        ),
      }),
      column.accessor('createdAt', {
        header: 'Placed',
        cell: ({ getValue }) => <time dateTime={getValue()} className="whitespace-nowrap">{dateFormat.format(new Date(getValue()))}</time>,
      }),
      column.accessor('email', { header: 'Buyer', enableSorting: false }),
      column.accessor('kind', {
        header: 'Holds',
        enableSorting: false,
        cell: ({ row }) => (
          <span className="whitespace-nowrap">
            {KIND_LABEL[row.original.kind]} <span className="text-ink-soft">· {row.original.lines} {row.original.lines === 1 ? 'line' : 'lines'}</span>
          </span>
        ),
      }),
      column.accessor('status', {
        header: 'State',
        cell: ({ getValue }) => (
          <span className={`whitespace-nowrap rounded-full border px-2 py-0.5 text-xs ${getValue() === 'paid' ? 'border-ember text-ember' : 'border-rule text-ink'}`}>
            {STATE_LABEL[getValue()]}
          </span>
        ),
      }),
      column.accessor('total', {
        header: 'Total',
        cell: ({ row }) => <span className="tabular-nums">{formatMoney(row.original.total, row.original.currency)}</span>,
      }),
    ],
    [],
  );

  const table = useReactTable({
    data: data.rows,
    columns,
    state: { sorting, pagination },
    getRowId: (row) => row.number,
    onSortingChange: (updater) => {
      setSorting(updater);
      setPagination((p) => ({ ...p, pageIndex: 0 }));
    },
    onPaginationChange: setPagination,
    getCoreRowModel: getCoreRowModel(),
    manualSorting: true,
    manualPagination: true,
    rowCount: data.total,
    enableMultiSort: false,
    enableSortingRemoval: false,
    sortDescFirst: true,
  });

  const filtered = Boolean(filters.state || filters.kind || filters.from || filters.to || q);
  const first = data.total === 0 ? 0 : (data.page - 1) * data.pageSize + 1;
  const last = (data.page - 1) * data.pageSize + data.rows.length;

  return (
    <div className="space-y-5" data-testid="dispatch-orders">
      <div className="flex flex-wrap items-end gap-3" role="search">
        <label className="min-w-[14rem] flex-1">
          <span className="eyebrow mb-1 block">Find</span>
          <input
            type="search"
            className="field"
            value={text}
            maxLength={100}
            onChange={(e) => {
              setText(e.target.value);
              setPagination((p) => ({ ...p, pageIndex: 0 }));
            }}
            placeholder="Order number or buyer’s e-mail"
          />
        </label>
        <label>
          <span className="eyebrow mb-1 block">State</span>
          <select className="field w-auto" value={filters.state} onChange={(e) => setFilter('state', e.target.value)}>
            <option value="">Any state</option>
            {ORDER_STATES.map((s) => <option key={s} value={s}>{STATE_LABEL[s]}</option>)}
          </select>
        </label>
        <label>
          <span className="eyebrow mb-1 block">Holds</span>
          <select className="field w-auto" value={filters.kind} onChange={(e) => setFilter('kind', e.target.value)}>
            <option value="">Anything</option>
            {ORDER_KINDS.map((k) => <option key={k} value={k}>{k === 'both' ? KIND_LABEL[k] : `${KIND_LABEL[k]} only`}</option>)}
          </select>
        </label>
        <label>
          <span className="eyebrow mb-1 block">Placed from</span>
          <input type="date" className="field w-auto" value={filters.from} onChange={(e) => setFilter('from', e.target.value)} />
        </label>
        <label>
          <span className="eyebrow mb-1 block">to</span>
          <input type="date" className="field w-auto" value={filters.to} min={filters.from || undefined} onChange={(e) => setFilter('to', e.target.value)} />
        </label>
        {filtered && (
          <button
            type="button"
            className="btn-quiet"
            onClick={() => {
              setFilters({ state: '', kind: '', from: '', to: '' });
              setText('');
              setPagination((p) => ({ ...p, pageIndex: 0 }));
            }}
          >
            Clear
          </button>
        )}
      </div>
      {dateProblem && <p role="alert" className="text-sm text-ember">{dateProblem}</p>}

      {orders.isError ? (
        <div role="alert" className="rounded-sm border border-ember p-4 text-sm">
          <p>{orders.error.message}</p>
          <button type="button" className="btn-quiet mt-3" onClick={() => orders.refetch()}>Try again</button>
        </div>
      ) : (
        <div className={`overflow-x-auto ${orders.isFetching ? 'opacity-70 transition-opacity' : ''}`} aria-busy={orders.isFetching}>
          <table className="w-full min-w-[44rem] border-collapse text-sm">
            <caption className="sr-only">Orders</caption>
            <thead>
              {table.getHeaderGroups().map((group) => (
                <tr key={group.id} className="border-b border-rule text-left">
                  {group.headers.map((header) => (
                    <SortableHeader key={header.id} header={header} sortable={header.column.getCanSort()} className={header.column.id === 'total' ? 'text-right' : ''} />
                  ))}
                </tr>
              ))}
            </thead>
            <tbody>
              {table.getRowModel().rows.map((row) => (
                <tr key={row.id} className="border-b border-rule" data-testid="order-row">
                  {row.getVisibleCells().map((cell) => (
                    <td key={cell.id} className={`px-2 py-2 align-middle ${cell.column.id === 'total' ? 'text-right' : ''}`}>
                      {flexRender(cell.column.columnDef.cell, cell.getContext())}
                    </td>
                  ))}
                </tr>
              ))}
            </tbody>
          </table>
          {data.rows.length === 0 && !orders.isFetching && (
            <p className="py-10 text-center text-ink-soft">{filtered ? 'No orders match these filters.' : 'No orders yet.'}</p>
          )}
        </div>
      )}

      <nav aria-label="Pages of orders" className="flex flex-wrap items-center justify-between gap-3 text-sm">
        <span className="text-ink-soft" aria-live="polite">
          {data.total === 0 ? 'No orders' : `${first}–${last} of ${data.total}`}
        </span>
        <span className="flex items-center gap-2">
          <label className="flex items-center gap-2 text-ink-soft">
            Per page
            <select
              className="field w-auto py-1.5"
              value={pagination.pageSize}
              onChange={(e) => setPagination({ pageIndex: 0, pageSize: Number(e.target.value) })}
            >
              {PAGE_SIZES.map((n) => <option key={n} value={n}>{n}</option>)}
            </select>
          </label>
          <button type="button" className="btn-quiet" disabled={!table.getCanPreviousPage()} onClick={() => table.previousPage()}>Previous</button>
          <span className="tabular-nums text-ink-soft">Page {pagination.pageIndex + 1} of {pageCount}</span>
          <button type="button" className="btn-quiet" disabled={!table.getCanNextPage()} onClick={() => table.nextPage()}>Next</button>
        </span>
      </nav>
    </div>
  );
}
