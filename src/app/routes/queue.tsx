import type { QueryClient } from '@tanstack/react-query';
import { ErrorNotice } from '../../components/ui/error-notice';
import { PageHeader } from '../../components/ui/page-header';
import { useMe } from '../../features/auth/api/get-me';
import { jobsQueryOptions, useJobs } from '../../features/queue/api/get-jobs';
import { JobList, QueueEmpty, sortJobs, splitQueue } from '../../features/queue/components/job-list';
import { daysUntil } from '../../lib/format';
import { RouteErrorBoundary } from './route-error';
import { ListSkeleton } from '../../components/ui/skeleton';
import { Stat } from '../../components/ui/stat';

export const createLoader = (queryClient: QueryClient) => () => {
  void queryClient.prefetchQuery(jobsQueryOptions());
  return null;
};

export function Component() {
  const me = useMe().data;
  const jobs = useJobs();
  const items = jobs.data ?? [];
  const overdue = items.filter((j) => j.overdue).length;
  const dueSoon = items.filter((j) => !j.overdue && daysUntil(j.dueOn) <= 14).length;
  const mine = me ? items.filter((j) => j.assigneeId === me.id).length : 0;

  return (
    <>
      <PageHeader title="Queue" description="Calibration work that is due or overdue, from each instrument's interval." />
      {jobs.isPending ? (
        <ListSkeleton />
      ) : jobs.isError ? (
        <ErrorNotice title="Could not load the queue" error={jobs.error} onRetry={() => void jobs.refetch()} />
      ) : items.length === 0 ? (
        <QueueEmpty />
      ) : (
        <div className="flex flex-col gap-8">
          <dl className="grid grid-cols-2 gap-3 sm:grid-cols-4">
            <Stat label="Jobs" value={items.length} />
            <Stat label="Overdue" value={overdue} tone={overdue ? 'danger' : undefined} />
            <Stat label="Due within 14 days" value={dueSoon} tone={dueSoon ? 'warn' : undefined} />
            <Stat label="Assigned to me" value={mine} />
          </dl>
          {me?.role === 'technician' ? (
            <TechnicianQueue jobs={items} userId={me.id} />
          ) : (
            <section aria-labelledby="all-jobs">
              <h2 id="all-jobs" className="mb-3 text-sm font-semibold tracking-wide text-ink-muted uppercase">
                All jobs
              </h2>
              <JobList jobs={sortJobs(items)} label="All jobs" />
            </section>
          )}
        </div>
      )}
    </>
  );
}

function TechnicianQueue({ jobs, userId }: { jobs: Parameters<typeof splitQueue>[0]; userId: string }) {
  const { mine, others } = splitQueue(jobs, userId);
  return (
    <>
      <section aria-labelledby="assigned-to-me">
        <h2 id="assigned-to-me" className="mb-3 text-sm font-semibold tracking-wide text-ink-muted uppercase">
          Assigned to me
        </h2>
        <JobList jobs={mine} label="Assigned to me" hideAssignee emptyText="Nothing is assigned to you right now." />
      </section>
      {others.length > 0 && (
        <section aria-labelledby="other-jobs">
          <h2 id="other-jobs" className="mb-3 text-sm font-semibold tracking-wide text-ink-muted uppercase">
            Other jobs
          </h2>
          <JobList jobs={others} label="Other jobs" />
        </section>
      )}
    </>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
