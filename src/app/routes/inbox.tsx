import type { QueryClient } from '@tanstack/react-query';
import type { LoaderFunctionArgs } from 'react-router';
import { ErrorNotice } from '../../components/ui/error-notice';
import { PageHeader } from '../../components/ui/page-header';
import { ListSkeleton } from '../../components/ui/skeleton';
import { InboxList } from '../../features/review/components/inbox-list';
import { reviewInboxQueryOptions, useReviewInbox } from '../../lib/review-inbox';
import { requireArea } from '../auth-guard';
import { RouteErrorBoundary } from './route-error';

export const createLoader =
  (queryClient: QueryClient) =>
  async ({ request }: LoaderFunctionArgs) => {
    const me = await requireArea(queryClient, request, 'review');
    void queryClient.prefetchQuery(reviewInboxQueryOptions());
    return me;
  };

/** The lead's review inbox: every job awaiting sign-off, the one waiting longest first. */
export function Component() {
  const inbox = useReviewInbox(true);
  return (
    <>
      <PageHeader title="Review" description="Jobs awaiting your review, the one waiting longest first. Open one to walk its points and raw traces, then approve or return it." />
      {inbox.isPending ? (
        <ListSkeleton />
      ) : inbox.isError ? (
        <ErrorNotice title="Could not load the review inbox" error={inbox.error} onRetry={() => void inbox.refetch()} />
      ) : (
        <InboxList items={inbox.data.items} />
      )}
    </>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
