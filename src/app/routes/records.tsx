import type { QueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { ErrorNotice } from '../../components/ui/error-notice';
import { PageHeader } from '../../components/ui/page-header';
import { SearchInput } from '../../components/ui/search-input';
import { ListSkeleton } from '../../components/ui/skeleton';
import { recordsQueryOptions, useRecords, type RecordsDates, type RecordsFilter } from '../../features/records/api/get-records';
import { RecordsTable } from '../../features/records/components/records-table';
import { cn } from '../../lib/cn';
import { RouteErrorBoundary } from './route-error';

export const createLoader = (queryClient: QueryClient) => () => {
  void queryClient.prefetchQuery(recordsQueryOptions('all'));
  return null;
};

const FILTERS: Array<{ value: RecordsFilter; label: string }> = [
  { value: 'all', label: 'All' },
  { value: 'submitted', label: 'Awaiting review' },
  { value: 'approved', label: 'Approved' },
];

export function Component() {
  const [filter, setFilter] = useState<RecordsFilter>('all');
  const [search, setSearch] = useState('');
  const [dates, setDates] = useState<RecordsDates>({ from: '', to: '' });
  const reversed = !!dates.from && !!dates.to && dates.from > dates.to;
  const q = useRecords(filter, reversed ? { from: '', to: '' } : dates);
  return (
    <>
      <PageHeader
        title="Records"
        description="Submitted and approved calibration records, their revisions and signatures."
        actions={<SearchInput label="Search records" placeholder="Search tag, person…" value={search} onValueChange={setSearch} />}
      />
      <div className="mb-4 flex flex-wrap items-end gap-x-6 gap-y-3">
      <div className="flex gap-1" role="group" aria-label="Show">
        {FILTERS.map((f) => (
          <button
            key={f.value}
            type="button"
            aria-pressed={filter === f.value}
            onClick={() => setFilter(f.value)}
            className={cn('rounded-md border px-3 py-1.5 text-sm', filter === f.value ? 'border-accent bg-accent-soft text-accent' : 'border-line text-ink-muted hover:text-ink')}
          >
            {f.label}
          </button>
        ))}
      </div>
      <fieldset className="flex flex-wrap items-end gap-3" data-testid="records-dates">
        <legend className="mb-1 text-sm font-medium">Calibrated between</legend>
        <label className="flex flex-col gap-1 text-xs text-ink-muted">
          From
          <input type="date" value={dates.from} max={dates.to || undefined} onChange={(e) => setDates((d) => ({ ...d, from: e.target.value }))} className="num h-9 rounded-md border border-line bg-surface px-2 text-sm text-ink" />
        </label>
        <label className="flex flex-col gap-1 text-xs text-ink-muted">
          To
          <input type="date" value={dates.to} min={dates.from || undefined} onChange={(e) => setDates((d) => ({ ...d, to: e.target.value }))} className="num h-9 rounded-md border border-line bg-surface px-2 text-sm text-ink" />
        </label>
        {(dates.from || dates.to) && (
          <button type="button" className="h-9 text-sm text-accent hover:underline" onClick={() => setDates({ from: '', to: '' })}>
            Any date
          </button>
        )}
        {reversed && (
          <p role="alert" className="text-sm text-danger">
            The start date is after the end date.
          </p>
        )}
      </fieldset>
      </div>
      {q.isPending ? (
        <ListSkeleton />
      ) : q.isError ? (
        <ErrorNotice title="Could not load the records" error={q.error} onRetry={() => void q.refetch()} />
      ) : (
        <RecordsTable records={q.data} search={search} />
      )}
    </>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
