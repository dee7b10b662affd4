import type { QueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { ErrorNotice } from '../../components/ui/error-notice';
import { PageHeader } from '../../components/ui/page-header';
import { SearchInput } from '../../components/ui/search-input';
import { ListSkeleton } from '../../components/ui/skeleton';
import { recordsQueryOptions, useRecords, type RecordsFilter } from '../../features/records/api/get-records';
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
  const q = useRecords(filter);
  return (
    <>
      <PageHeader
        title="Records"
        description="Submitted and approved calibration records, their revisions and signatures."
        actions={<SearchInput label="Search records" placeholder="Search tag, person…" value={search} onValueChange={setSearch} />}
      />
      <div className="mb-4 flex gap-1" role="group" aria-label="Show">
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
