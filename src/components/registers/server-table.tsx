import { useEffect, useState, type ReactNode } from 'react';
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

/**
 * A register table whose sorting, search and paging happen on the server; the columns shown are
 * the user's choice (remembered in this browser).
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
  const shown = columns.filter((c) => !hidden.has(c.id));
  const pages = Math.max(1, Math.ceil(total / pageSize));
  return (
    <div className="flex flex-col gap-2">
      <div className="flex flex-wrap items-center justify-between gap-2 text-sm text-ink-muted">
        <details className="relative">
          <summary className="cursor-pointer rounded-md border border-line-strong px-3 py-1.5 text-sm text-ink">Columns</summary>
          <fieldset className="absolute z-10 mt-1 flex w-56 flex-col gap-1 rounded-md border border-line bg-surface p-3 shadow-xl">
            <legend className="sr-only">Columns to show</legend>
            {columns.map((c) => (
              <label key={c.id} className="flex items-center gap-2 text-sm text-ink">
                <input
                  type="checkbox"
                  checked={!hidden.has(c.id)}
                  onChange={(e) => {
                    const next = new Set(hidden);
                    if (e.target.checked) next.delete(c.id);
                    else next.add(c.id);
                    setHidden(next);
                  }}
                />
                {c.header}
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
            <tr>
              {shown.map((c) => {
                const active = c.sortKey && sort.sort === c.sortKey;
                return (
                  <th
                    key={c.id}
                    scope="col"
                    aria-sort={active ? (sort.dir === 'asc' ? 'ascending' : 'descending') : c.sortKey ? 'none' : undefined}
                    className={cn('border-b border-line px-3 py-2.5 text-left text-xs font-semibold tracking-wide whitespace-nowrap text-ink-muted', c.numeric && 'text-right')}
                  >
                    {c.sortKey ? (
                      <button
                        type="button"
                        className="hover:text-ink"
                        onClick={() => onSort({ sort: c.sortKey!, dir: active && sort.dir === 'asc' ? 'desc' : 'asc' })}
                      >
                        {c.header} {active ? (sort.dir === 'asc' ? '▲' : '▼') : ''}
                      </button>
                    ) : (
                      c.header
                    )}
                  </th>
                );
              })}
              {rowActions && <th className="border-b border-line" aria-label="Actions" />}
            </tr>
          </thead>
          <tbody>
            {rows.length === 0 ? (
              <tr>
                <td colSpan={shown.length + (rowActions ? 1 : 0)} className="px-3 py-10 text-center text-ink-muted">
                  {empty}
                </td>
              </tr>
            ) : (
              rows.map((r) => (
                <tr key={rowKey(r)} className="border-b border-line last:border-b-0 hover:bg-sunken/50">
                  {shown.map((c) => (
                    <td key={c.id} className={cn('px-3 py-2.5 align-middle', c.numeric && 'num text-right')}>
                      {c.cell(r)}
                    </td>
                  ))}
                  {rowActions && <td className="px-3 py-2 text-right whitespace-nowrap">{rowActions(r)}</td>}
                </tr>
              ))
            )}
          </tbody>
        </table>
      </div>
      {pages > 1 && (
        <nav aria-label="Pages" className="flex items-center justify-end gap-2 text-sm">
          <Button size="sm" variant="secondary" disabled={page <= 1} onClick={() => onPage(page - 1)}>
            Previous
          </Button>
          <span>
            Page <span className="num">{page}</span> of <span className="num">{pages}</span>
          </span>
          <Button size="sm" variant="secondary" disabled={page >= pages} onClick={() => onPage(page + 1)}>
            Next
          </Button>
        </nav>
      )}
    </div>
  );
}
