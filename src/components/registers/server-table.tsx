import {
  flexRender,
  getCoreRowModel,
  useReactTable,
  type ColumnDef,
  type PaginationState,
  type SortingState,
  type Updater,
  type VisibilityState,
} from '@tanstack/react-table';
import { useEffect, useMemo, useState, type ReactNode } from 'react';
import { cn } from '../../lib/cn';
import { Button } from '../ui/button';

/** One column of a server-paged register table. */
export interface RegisterColumn<T> {
  id: string;
  header: string;
  /** Server sort key, when the server can sort by this column. */
  sortKey?: string;
  numeric?: boolean;
  /** Hidden until the user shows it. */
  optional?: boolean;
  cell: (row: T) => ReactNode;
}

export interface SortState {
  sort: string;
  dir: 'asc' | 'desc';
}

export interface ServerTableProps<T> {
  caption: string;
  /** localStorage key for the chosen columns. */
  storageKey: string;
  columns: RegisterColumn<T>[];
  rows: readonly T[];
  rowKey: (row: T) => string;
  total: number;
  page: number;
  pageSize: number;
  sort: SortState;
  onSort: (s: SortState) => void;
  onPage: (page: number) => void;
  empty: ReactNode;
  loading?: boolean;
  rowActions?: (row: T) => ReactNode;
}

function loadHidden(key: string, columns: RegisterColumn<unknown>[]): Set<string> {
  try {
    const raw = localStorage.getItem(key);
    if (raw) return new Set(JSON.parse(raw) as string[]);
  } catch {
    /* private mode: defaults */
  }
  return new Set(columns.filter((c) => c.optional).map((c) => c.id));
}

/** The value after a TanStack state updater (a value or a function of the previous value). */
function next<S>(u: Updater<S>, prev: S): S {
  return typeof u === 'function' ? (u as (p: S) => S)(prev) : u;
}

/**
 * A register table whose sorting, search and paging happen on the server; the columns shown are
 * the user's choice (remembered in this browser). Sorting, paging and column visibility are
 * TanStack Table state (manual sorting and pagination: the rows arrive sorted and paged), held by
 * the page as its URL's `sort`, `dir` and `page`.
 */
export function ServerTable<T>({ caption, storageKey, columns, rows, rowKey, total, page, pageSize, sort, onSort, onPage, empty, loading, rowActions }: ServerTableProps<T>) {
  const [hidden, setHidden] = useState<Set<string>>(() => loadHidden(storageKey, columns as RegisterColumn<unknown>[]));
  useEffect(() => {
    try {
      localStorage.setItem(storageKey, JSON.stringify([...hidden]));
    } catch {
      /* ignore */
    }
  }, [hidden, storageKey]);
  const defs = useMemo<ColumnDef<T>[]>(
    () =>
      columns.map((c) => ({
        id: c.id,
        header: c.header,
        cell: ({ row }) => c.cell(row.original),
        // TanStack sorts only accessor columns; the server does the sorting, so the value is never read.
        accessorFn: () => null,
        enableSorting: c.sortKey !== undefined,
      })),
    [columns],
  );
  const byId = new Map(columns.map((c) => [c.id, c]));
  const sortedColumn = columns.find((c) => c.sortKey !== undefined && c.sortKey === sort.sort);
  const sorting: SortingState = sortedColumn ? [{ id: sortedColumn.id, desc: sort.dir === 'desc' }] : [];
  const pagination: PaginationState = { pageIndex: page - 1, pageSize };
  const columnVisibility: VisibilityState = Object.fromEntries(columns.map((c) => [c.id, !hidden.has(c.id)]));
  const table = useReactTable<T>({
    data: rows as T[],
    columns: defs,
    getRowId: (r) => rowKey(r),
    getCoreRowModel: getCoreRowModel(),
    manualSorting: true,
    manualPagination: true,
    rowCount: total,
    state: { sorting, pagination, columnVisibility },
    // A header click sorts ascending first, then flips; it never clears the sort, and sorts one column.
    sortDescFirst: false,
    enableSortingRemoval: false,
    enableMultiSort: false,
    onSortingChange: (u) => {
      const first = next(u, sorting)[0];
      const key = first && byId.get(first.id)?.sortKey;
      if (key) onSort({ sort: key, dir: first.desc ? 'desc' : 'asc' });
    },
    onPaginationChange: (u) => onPage(next(u, pagination).pageIndex + 1),
    onColumnVisibilityChange: (u) => {
      const v = next(u, columnVisibility);
      setHidden(new Set(columns.filter((c) => v[c.id] === false).map((c) => c.id)));
    },
  });
  const shown = table.getVisibleLeafColumns();
  const pages = table.getPageCount();
  return (
    <div className="flex flex-col gap-2">
      <div className="flex flex-wrap items-center justify-between gap-2 text-sm text-ink-muted">
        <details className="relative">
          <summary className="cursor-pointer rounded-md border border-line-strong px-3 py-1.5 text-sm text-ink">Columns</summary>
          <fieldset className="absolute z-10 mt-1 flex w-56 flex-col gap-1 rounded-md border border-line bg-surface p-3 shadow-xl">
            <legend className="sr-only">Columns to show</legend>
            {table.getAllLeafColumns().map((col) => (
              <label key={col.id} className="flex items-center gap-2 text-sm text-ink">
                <input type="checkbox" checked={col.getIsVisible()} onChange={(e) => col.toggleVisibility(e.target.checked)} />
                {byId.get(col.id)?.header}
              </label>
            ))}
          </fieldset>
        </details>
        <span aria-live="polite">
          {total === 0 ? 'No rows' : (
            <>
              Rows <span className="num">{(page - 1) * pageSize + 1}</span>–<span className="num">{Math.min(total, page * pageSize)}</span> of <span className="num">{total}</span>
            </>
          )}
          {loading && ' · loading…'}
        </span>
      </div>
      <div className="relative overflow-x-auto rounded-card border border-line bg-surface shadow-card">
        <table className="w-full border-collapse text-sm">
          <caption className="sr-only">{caption}</caption>
          <thead className="bg-sunken/60">
            {table.getHeaderGroups().map((group) => (
              <tr key={group.id}>
                {group.headers.map((h) => {
                  const col = h.column;
                  const dir = col.getIsSorted();
                  return (
                    <th
                      key={h.id}
                      scope="col"
                      aria-sort={dir ? (dir === 'asc' ? 'ascending' : 'descending') : col.getCanSort() ? 'none' : undefined}
                      className={cn('border-b border-line px-3 py-2.5 text-left text-xs font-semibold tracking-wide whitespace-nowrap text-ink-muted', byId.get(col.id)?.numeric && 'text-right')}
                    >
                      {col.getCanSort() ? (
                        <button type="button" className="hover:text-ink" onClick={col.getToggleSortingHandler()}>
                          {flexRender(col.columnDef.header, h.getContext())} {dir ? (dir === 'asc' ? '▲' : '▼') : ''}
                        </button>
                      ) : (
                        flexRender(col.columnDef.header, h.getContext())
                      )}
                    </th>
                  );
                })}
                {rowActions && <th className="border-b border-line" aria-label="Actions" />}
              </tr>
            ))}
          </thead>
          <tbody>
            {rows.length === 0 ? (
              <tr>
                <td colSpan={shown.length + (rowActions ? 1 : 0)} className="px-3 py-10 text-center text-ink-muted">
                  {empty}
                </td>
              </tr>
            ) : (
              table.getRowModel().rows.map((r) => (
                <tr key={r.id} className="border-b border-line last:border-b-0 hover:bg-sunken/50">
                  {r.getVisibleCells().map((cell) => (
                    <td key={cell.id} className={cn('px-3 py-2.5 align-middle', byId.get(cell.column.id)?.numeric && 'num text-right')}>
                      {flexRender(cell.column.columnDef.cell, cell.getContext())}
                    </td>
                  ))}
                  {rowActions && <td className="px-3 py-2 text-right whitespace-nowrap">{rowActions(r.original)}</td>}
                </tr>
              ))
            )}
          </tbody>
        </table>
      </div>
      {pages > 1 && (
        <nav aria-label="Pages" className="flex items-center justify-end gap-2 text-sm">
          <Button size="sm" variant="secondary" disabled={!table.getCanPreviousPage()} onClick={() => table.previousPage()}>
            Previous
          </Button>
          <span>
            Page <span className="num">{page}</span> of <span className="num">{pages}</span>
          </span>
          <Button size="sm" variant="secondary" disabled={!table.getCanNextPage()} onClick={() => table.nextPage()}>
            Next
          </Button>
        </nav>
      )}
    </div>
  );
}
