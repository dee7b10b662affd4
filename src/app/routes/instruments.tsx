import type { QueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { ErrorNotice } from '../../components/ui/error-notice';
import { PageHeader } from '../../components/ui/page-header';
import { SearchInput } from '../../components/ui/search-input';
import { ListSkeleton } from '../../components/ui/skeleton';
import { instrumentsQueryOptions, useInstruments } from '../../features/instruments/api/get-instruments';
import { InstrumentsTable } from '../../features/instruments/components/instruments-table';
import { RouteErrorBoundary } from './route-error';

export const createLoader = (queryClient: QueryClient) => () => {
  void queryClient.prefetchQuery(instrumentsQueryOptions());
  return null;
};

export function Component() {
  const q = useInstruments();
  const [search, setSearch] = useState('');
  return (
    <>
      <PageHeader
        title="Instruments"
        description={
          q.data ? (
            <>
              The transmitter register: <span className="num">{q.data.total}</span> tags with their ranges, output modes, tolerances and
              intervals.
            </>
          ) : (
            'The transmitter register.'
          )
        }
        actions={<SearchInput label="Search instruments" placeholder="Search tag, service, location…" value={search} onValueChange={setSearch} />}
      />
      {q.isPending ? (
        <ListSkeleton />
      ) : q.isError ? (
        <ErrorNotice title="Could not load the instrument register" error={q.error} onRetry={() => void q.refetch()} />
      ) : (
        <InstrumentsTable instruments={q.data.items} search={search} />
      )}
    </>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
