import type { QueryClient } from '@tanstack/react-query';
import { ErrorNotice } from '../../components/ui/error-notice';
import { PageHeader } from '../../components/ui/page-header';
import { useMe } from '../../features/auth/api/get-me';
import { jobsQueryOptions, useJobs } from '../../features/queue/api/get-jobs';
import { useQueue } from '../../features/queue/api/get-queue';
import { LeadJobActions } from '../../features/queue/components/job-actions';
import { NeedsJobList } from '../../features/queue/components/needs-job-list';
import { JobList, QueueEmpty, sortJobs, splitQueue } from '../../features/queue/components/job-list';
import { daysUntil } from '../../lib/format';
import { RouteErrorBoundary } from './route-error';
import { ListSkeleton } from '../../components/ui/skeleton';
import { Stat } from '../../components/ui/stat';

export const createLoader = (queryClient: QueryClient) => () => {
  void queryClient.prefetchQuery(jobsQueryOptions());
  return null;
};

/** Instruments due within this many days without a job show as needing one. */
const WITHIN_DAYS = 30;

export function Component() {
  const me = useMe().data;
  const jobs = useJobs();
  // What falls due without a job, and who can be assigned: for the people who plan the work.
  const planner = me?.role === 'lead' || me?.role === 'admin';
  const queue = useQueue(WITHIN_DAYS, planner);
  const items = (jobs.data ?? []).filter((j) => j.status !== 'approved');
  const needs = queue.data?.needsJob ?? [];
  const technicians = queue.data?.technicians ?? [];
  const isLead = me?.role === 'lead';
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
      ) : items.length === 0 && needs.length === 0 ? (
        <QueueEmpty />
      ) : (
        <div className="flex flex-col gap-8">
          <dl className="grid grid-cols-2 gap-3 sm:grid-cols-4">
            <Stat label="Jobs" value={items.length} />
            <Stat label="Overdue" value={overdue} tone={overdue ? 'danger' : undefined} />
            <Stat label="Due within 14 days" value={dueSoon} tone={dueSoon ? 'warn' : undefined} />
            <Stat label={me?.role === 'technician' ? 'Assigned to me' : 'Need a job'} value={me?.role === 'technician' ? mine : needs.length} tone={me?.role !== 'technician' && needs.length ? 'warn' : undefined} />
          </dl>
          {me?.role === 'technician' ? (
            <TechnicianQueue jobs={items} userId={me.id} />
          ) : (
            <section aria-labelledby="all-jobs">
              <h2 id="all-jobs" className="mb-3 text-sm font-semibold tracking-wide text-ink-muted">
                All jobs
              </h2>
              <JobList jobs={sortJobs(items)} label="All jobs" actions={isLead ? (j) => <LeadJobActions job={j} technicians={technicians} /> : undefined} />
            </section>
          )}
          {planner && (
            <section aria-labelledby="needs-job">
              <h2 id="needs-job" className="mb-3 text-sm font-semibold tracking-wide text-ink-muted">
                Due within {WITHIN_DAYS} days, no job yet
              </h2>
              <NeedsJobList items={needs} technicians={technicians} canPlan={isLead} />
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
        <h2 id="assigned-to-me" className="mb-3 text-sm font-semibold tracking-wide text-ink-muted">
          Assigned to me
        </h2>
        <JobList jobs={mine} label="Assigned to me" hideAssignee emptyText="Nothing is assigned to you right now." />
      </section>
      {others.length > 0 && (
        <section aria-labelledby="other-jobs">
          <h2 id="other-jobs" className="mb-3 text-sm font-semibold tracking-wide text-ink-muted">
            Other jobs
          </h2>
          <JobList jobs={others} label="Other jobs" />
        </section>
      )}
    </>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
