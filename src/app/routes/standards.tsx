import type { QueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { ErrorNotice } from '../../components/ui/error-notice';
import { PageHeader } from '../../components/ui/page-header';
import { SearchInput } from '../../components/ui/search-input';
import { ListSkeleton } from '../../components/ui/skeleton';
import { Stat } from '../../components/ui/stat';
import { standardsQueryOptions, useStandards } from '../../features/standards/api/get-standards';
import { StandardsTable } from '../../features/standards/components/standards-table';
import { RouteErrorBoundary } from './route-error';

export const createLoader = (queryClient: QueryClient) => () => {
  void queryClient.prefetchQuery(standardsQueryOptions());
  return null;
};

export function Component() {
  const q = useStandards();
  const [search, setSearch] = useState('');
  const items = q.data?.items ?? [];
  const expired = items.filter((s) => s.dueState === 'expired').length;
  const dueSoon = items.filter((s) => s.dueState === 'due-soon').length;
  return (
    <>
      <PageHeader
        title="Standards"
        description="Reference standards used on the bench. An expired standard cannot be used for a run."
        actions={<SearchInput label="Search standards" placeholder="Search description, serial, certificate…" value={search} onValueChange={setSearch} />}
      />
      {q.isPending ? (
        <ListSkeleton />
      ) : q.isError ? (
        <ErrorNotice title="Could not load the standards register" error={q.error} onRetry={() => void q.refetch()} />
      ) : (
        <div className="flex flex-col gap-6">
          <dl className="grid grid-cols-3 gap-3 sm:max-w-xl">
            <Stat label="Standards" value={q.data.total} />
            <Stat label="Due soon" value={dueSoon} tone={dueSoon ? 'warn' : undefined} />
            <Stat label="Expired" value={expired} tone={expired ? 'danger' : undefined} />
          </dl>
          <StandardsTable standards={items} search={search} />
        </div>
      )}
    </>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
