import type { QueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import type { LoaderFunctionArgs } from 'react-router';
import { EmptyState } from '../../components/ui/empty-state';
import { ErrorNotice } from '../../components/ui/error-notice';
import { PageHeader } from '../../components/ui/page-header';
import { ListSkeleton } from '../../components/ui/skeleton';
import { outboxQueryOptions, useOutbox } from '../../features/outbox/api/get-outbox';
import { MessageView } from '../../features/outbox/components/message-view';
import { OutboxList } from '../../features/outbox/components/outbox-list';
import { requireArea } from '../auth-guard';
import { RouteErrorBoundary } from './route-error';

export const createLoader =
  (queryClient: QueryClient) =>
  async ({ request }: LoaderFunctionArgs) => {
    const r = await requireArea(queryClient, request, 'outbox');
    void queryClient.prefetchQuery(outboxQueryOptions());
    return r;
  };

export function Component() {
  const q = useOutbox();
  const [chosen, setChosen] = useState<string | null>(null);
  const selected = chosen ?? q.data?.[0]?.id ?? null;
  return (
    <>
      <PageHeader title="Outbox" description="Team mail received by the local mail server (no SMTP server is configured): assignments, submissions, returns, approvals and due lists." />
      {q.isPending ? (
        <ListSkeleton />
      ) : q.isError ? (
        <ErrorNotice title="Could not load the outbox" error={q.error} onRetry={() => void q.refetch()} />
      ) : q.data.length === 0 ? (
        <EmptyState title="No mail yet" description="Messages appear here as Stillpoint sends them." />
      ) : (
        <div className="grid gap-4 md:grid-cols-[minmax(16rem,22rem)_1fr]">
          <OutboxList messages={q.data} selectedId={selected} onSelect={setChosen} />
          {selected && <MessageView id={selected} />}
        </div>
      )}
    </>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
