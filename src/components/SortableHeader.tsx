import { flexRender, type Header } from '@tanstack/react-table';

type Props<Row> = { header: Header<Row, unknown>; sortable: boolean; className?: string };

/** A table header cell that sorts by its column when clicked, and says so to screen readers. */
export default function SortableHeader<Row>({ header, sortable, className = '' }: Props<Row>) {
  const sort = header.column.getIsSorted();
  const label = flexRender(header.column.columnDef.header, header.getContext());
  return (
    <th scope="col" className={`px-2 py-2 font-medium text-ink-soft ${className}`} aria-sort={sort === 'asc' ? 'ascending' : sort === 'desc' ? 'descending' : undefined}>
      {sortable ? (
        <button type="button" className="inline-flex items-center gap-1 hover:text-ink" onClick={header.column.getToggleSortingHandler()}>
          {label}
          <span aria-hidden="true" className="w-3 text-ember">{sort === 'asc' ? '↑' : sort === 'desc' ? '↓' : ''}</span>
        </button>
      ) : (
        label
      )}
    </th>
  );
}
