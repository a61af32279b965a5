import { flexRender, getCoreRowModel, useReactTable, type ColumnDef, type SortingState } from '@tanstack/react-table';
import type { Page } from '@shared/schemas/common.schema';
import { Button } from './button';
import { EmptyState, Loading } from './page';

interface DataTableProps<T> {
  caption: string;
  columns: ColumnDef<T, unknown>[];
  data: Page<T> | undefined;
  isLoading: boolean;
  page: number;
  onPage: (page: number) => void;
  sorting?: SortingState;
  onSorting?: (s: SortingState) => void;
  empty: { title: string; hint?: string };
  rowTestId?: string;
}

/** A server-paged, server-sorted table: the page, sort and filters live in the URL and go to the API. */
export function DataTable<T>({ caption, columns, data, isLoading, page, onPage, sorting = [], onSorting, empty, rowTestId }: DataTableProps<T>) {
  // eslint-disable-next-line react-hooks/incompatible-library -- the table is rebuilt each render by design
  const table = useReactTable({
    data: data?.items ?? [],
    columns,
    manualPagination: true,
    manualSorting: true,
    rowCount: data?.total ?? 0,
    state: { sorting, pagination: { pageIndex: page - 1, pageSize: data?.pageSize ?? 25 } },
    onSortingChange: (updater) => onSorting?.(typeof updater === 'function' ? updater(sorting) : updater),
    getCoreRowModel: getCoreRowModel(),
  });
  if (isLoading) return <Loading />;
  if (!data || data.items.length === 0) return <EmptyState title={empty.title}>{empty.hint}</EmptyState>;
  const pages = Math.max(1, Math.ceil(data.total / data.pageSize));
  return (
    <div>
      <div className="overflow-x-auto rounded-card border border-line bg-surface">
        <table className="w-full border-collapse text-left text-sm">
          <caption className="sr-only">{caption}</caption>
          <thead className="bg-brand-soft">
            {table.getHeaderGroups().map((hg) => (
              <tr key={hg.id}>
                {hg.headers.map((h) => {
                  const sortable = h.column.getCanSort() && onSorting;
                  const dir = h.column.getIsSorted();
                  return (
                    <th key={h.id} scope="col" className="px-3 py-2 font-semibold" aria-sort={dir === 'asc' ? 'ascending' : dir === 'desc' ? 'descending' : undefined}>
                      {sortable ? (
                        <button type="button" className="min-h-11 min-w-11 text-left font-semibold" onClick={h.column.getToggleSortingHandler()}>
                          {flexRender(h.column.columnDef.header, h.getContext())} {dir === 'asc' ? '▲' : dir === 'desc' ? '▼' : ''}
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
          <tbody>
            {table.getRowModel().rows.map((row) => (
              <tr key={row.id} className="border-t border-line" data-testid={rowTestId}>
                {row.getVisibleCells().map((cell) => (
                  <td key={cell.id} className="px-3 py-2 align-top">
                    {flexRender(cell.column.columnDef.cell, cell.getContext())}
                  </td>
                ))}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <nav aria-label="Pages" className="mt-3 flex flex-wrap items-center gap-2 text-sm">
        <Button variant="secondary" disabled={page <= 1} onClick={() => onPage(page - 1)}>
          Previous
        </Button>
        <span>
          Page {page} of {pages} · {data.total} in all
        </span>
        <Button variant="secondary" disabled={page >= pages} onClick={() => onPage(page + 1)}>
          Next
        </Button>
      </nav>
    </div>
  );
}
