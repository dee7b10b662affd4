import {
  flexRender,
  getCoreRowModel,
  getFilteredRowModel,
  getSortedRowModel,
  useReactTable,
  type ColumnDef,
  type FilterFn,
  type Row,
  type SortingState,
} from '@tanstack/react-table';
import { useState, type ReactNode } from 'react';
import { cn } from '../../lib/cn';

export type { ColumnDef } from '@tanstack/react-table';

/** Per-column extras read by DataTable. */
export interface ColumnMeta {
  /** Right-align and use the mono face (numbers). */
  numeric?: boolean;
  className?: string;
}

export interface DataTableProps<T> {
  data: readonly T[];
  columns: ColumnDef<T, never>[] | ColumnDef<T>[];
  /** Accessible name of the table (rendered as a visually hidden caption). */
  caption: string;
  /** Text to search for across columns with `enableGlobalFilter` (default true). */
  globalFilter?: string;
  /** Custom search over a row; default matches the search text against each cell value. */
  globalFilterFn?: FilterFn<T>;
  initialSorting?: SortingState;
  getRowId?: (row: T) => string;
  /** Shown in place of the body when no rows match. */
  empty?: ReactNode;
  rowClassName?: (row: Row<T>) => string | undefined;
  className?: string;
  /**
   * Below the `sm` breakpoint, read each row as a block of labelled lines (the headers stay as a
   * row of sort buttons) instead of a table scrolled sideways inside its frame.
   */
  stackOnPhone?: boolean;
}

const containsText: FilterFn<unknown> = (row, columnId, value: string) => {
  if (!value.trim()) return true;
  const cell = row.getValue(columnId);
  if (cell === null || cell === undefined) return false;
  return String(cell).toLowerCase().includes(value.trim().toLowerCase());
};

/** Sortable, searchable table on TanStack Table. Sort by clicking a header (keyboard: Enter/Space). */
export function DataTable<T>({
  data,
  columns,
  caption,
  globalFilter = '',
  globalFilterFn,
  initialSorting = [],
  getRowId,
  empty,
  rowClassName,
  className,
  stackOnPhone = false,
}: DataTableProps<T>) {
  const phone = (cls: string) => (stackOnPhone ? cls : undefined);
  const [sorting, setSorting] = useState<SortingState>(initialSorting);
  const table = useReactTable<T>({
    data: data as T[],
    columns: columns as ColumnDef<T>[],
    state: { sorting, globalFilter: globalFilter.trim() ? globalFilter : undefined },
    onSortingChange: setSorting,
    globalFilterFn: globalFilterFn ?? (containsText as FilterFn<T>),
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
    getFilteredRowModel: getFilteredRowModel(),
    ...(getRowId ? { getRowId: (r: T) => getRowId(r) } : {}),
  });
  const rows = table.getRowModel().rows;

  return (
    <div className={cn('relative overflow-x-auto rounded-card border border-line bg-surface shadow-card', className)}>
      <table className={cn('w-full border-collapse text-sm', phone('max-sm:block'))}>
        <caption className="sr-only">{caption}</caption>
        <thead className={cn('bg-sunken/60', phone('max-sm:block max-sm:border-b max-sm:border-line'))}>
          {table.getHeaderGroups().map((hg) => (
            <tr key={hg.id} className={phone('max-sm:flex max-sm:flex-wrap max-sm:px-1')}>
              {hg.headers.map((h) => {
                const meta = h.column.columnDef.meta as ColumnMeta | undefined;
                const sorted = h.column.getIsSorted();
                const canSort = h.column.getCanSort();
                const label = h.isPlaceholder ? null : flexRender(h.column.columnDef.header, h.getContext());
                return (
                  <th
                    key={h.id}
                    scope="col"
                    aria-sort={sorted === 'asc' ? 'ascending' : sorted === 'desc' ? 'descending' : canSort ? 'none' : undefined}
                    className={cn(
                      'border-b border-line px-3 py-2.5 text-left text-xs font-semibold tracking-wide text-ink-muted whitespace-nowrap',
                      meta?.numeric && 'text-right',
                      phone('max-sm:border-b-0 max-sm:px-2 max-sm:py-1.5'),
                      phone(label === null || !canSort ? 'max-sm:hidden' : ''),
                    )}
                  >
                    {canSort ? (
                      <button
                        type="button"
                        onClick={h.column.getToggleSortingHandler()}
                        className={cn(
                          'inline-flex items-center gap-1 rounded tracking-wide hover:text-ink focus-visible:outline-2 focus-visible:outline-focus',
                          meta?.numeric && 'flex-row-reverse',
                        )}
                      >
                        {label}
                        <SortIcon dir={sorted} />
                      </button>
                    ) : (
                      label
                    )}
                  </th>
                );
              })}
            </tr>
          ))}
        </thead>
        <tbody className={phone('max-sm:block')}>
          {rows.length === 0 ? (
            <tr className={phone('max-sm:block')}>
              <td colSpan={table.getVisibleLeafColumns().length} className={cn('px-3 py-10 text-center text-ink-muted', phone('max-sm:block'))}>
                {empty ?? 'Nothing to show.'}
              </td>
            </tr>
          ) : (
            rows.map((row) => (
              <tr key={row.id} className={cn('border-b border-line last:border-b-0 hover:bg-sunken/50', phone('max-sm:block max-sm:py-2'), rowClassName?.(row))}>
                {row.getVisibleCells().map((cell) => {
                  const meta = cell.column.columnDef.meta as ColumnMeta | undefined;
                  const header = cell.column.columnDef.header;
                  return (
                    <td
                      key={cell.id}
                      className={cn(
                        'px-3 py-2.5 align-middle',
                        meta?.numeric && 'num text-right',
                        meta?.className,
                        phone('max-sm:flex max-sm:items-baseline max-sm:gap-3 max-sm:py-0.5 max-sm:text-left'),
                      )}
                    >
                      {stackOnPhone && typeof header === 'string' && header && (
                        <span className="w-28 shrink-0 font-sans text-xs text-ink-muted sm:hidden" aria-hidden="true">
                          {header}
                        </span>
                      )}
                      {stackOnPhone && !(typeof header === 'string' && header) && <span className="w-28 shrink-0 sm:hidden" aria-hidden="true" />}
                      {flexRender(cell.column.columnDef.cell, cell.getContext())}
                    </td>
                  );
                })}
              </tr>
            ))
          )}
        </tbody>
      </table>
    </div>
  );
}

function SortIcon({ dir }: { dir: false | 'asc' | 'desc' }) {
  return (
    <svg viewBox="0 0 12 12" className={cn('size-3', dir ? 'text-ink' : 'text-ink-faint')} aria-hidden="true">
      <path d="M6 2.5l2.5 3h-5z" fill="currentColor" opacity={dir === 'desc' ? 0.25 : 1} />
      <path d="M6 9.5l-2.5-3h5z" fill="currentColor" opacity={dir === 'asc' ? 0.25 : 1} />
    </svg>
  );
}
