import type { ReactNode } from 'react';
import { Link } from 'react-router';
import type { Job, JobStatus } from '../../../../shared/schemas/jobs';
import { Badge, type BadgeTone } from '../../../components/ui/badge';
import { EmptyState } from '../../../components/ui/empty-state';
import { cn } from '../../../lib/cn';
import { daysUntil, relativeDays } from '../../../lib/format';

const STATUS: Record<JobStatus, { label: string; tone: BadgeTone }> = {
  open: { label: 'Open', tone: 'neutral' },
  'in-progress': { label: 'In progress', tone: 'info' },
  submitted: { label: 'Submitted', tone: 'accent' },
  returned: { label: 'Returned', tone: 'warn' },
  approved: { label: 'Approved', tone: 'ok' },
};

/** Overdue first, then by due date, then by tag. */
export function sortJobs(jobs: readonly Job[]): Job[] {
  return [...jobs].sort((a, b) => Number(b.overdue) - Number(a.overdue) || a.dueOn.localeCompare(b.dueOn) || a.tag.localeCompare(b.tag));
}

/** Split a queue into the caller's own jobs and the rest (each sorted). */
export function splitQueue(jobs: readonly Job[], userId: string): { mine: Job[]; others: Job[] } {
  const sorted = sortJobs(jobs);
  return { mine: sorted.filter((j) => j.assigneeId === userId), others: sorted.filter((j) => j.assigneeId !== userId) };
}

export interface JobListProps {
  jobs: readonly Job[];
  /** Accessible name of the list. */
  label: string;
  /** Today's date (YYYY-MM-DD) for tests; defaults to today in the site's zone. */
  today?: string;
  emptyText?: string;
  /** Hide the assignee (e.g. in the caller's own list). */
  hideAssignee?: boolean;
  /** Extra controls per job (assign, review), shown before the status. */
  actions?: (job: Job) => ReactNode;
}

export function JobList({ jobs, label, today, emptyText = 'No jobs here.', hideAssignee = false, actions }: JobListProps) {
  if (jobs.length === 0) return <p className="rounded-card border border-dashed border-line px-4 py-6 text-center text-sm text-ink-muted">{emptyText}</p>;
  return (
    <ul aria-label={label} className="divide-y divide-line overflow-hidden rounded-card border border-line bg-surface shadow-card">
      {jobs.map((j) => {
        const days = daysUntil(j.dueOn, today);
        const st = STATUS[j.status];
        return (
          // On a phone: tag and status on the first line, the due date and assignee on the second (never under the status pill).
          <li
            key={j.id}
            className={cn(
              'grid grid-cols-[minmax(0,1fr)_auto] items-center gap-x-4 gap-y-1.5 px-4 py-3 sm:grid-cols-[minmax(7rem,10rem)_minmax(0,1fr)_auto] sm:gap-y-0',
              j.overdue && 'border-l-4 border-l-danger pl-3',
            )}
          >
            <Link to={`/jobs/${j.id}`} className="num text-base font-semibold text-accent underline-offset-2 hover:underline" data-testid={`job-link-${j.tag}`}>
              {j.tag}
            </Link>
            <div className="col-span-2 row-start-2 flex min-w-0 flex-wrap items-center gap-x-4 gap-y-1 text-sm sm:col-span-1 sm:row-start-auto">
              <span className="text-ink-muted">
                Due <span className="num text-ink">{j.dueOn}</span>{' '}
                <span className={cn(j.overdue ? 'font-medium text-danger' : 'text-ink-faint')}>({relativeDays(days)})</span>
              </span>
              {j.overdue && <Badge tone="danger">Overdue</Badge>}
              {!hideAssignee && (
                <span className="text-ink-muted">{j.assigneeName ? <>Assigned to {j.assigneeName}</> : <span className="italic">Unassigned</span>}</span>
              )}
            </div>
            <div className="flex flex-wrap items-center justify-end gap-3">
              {actions?.(j)}
              <Badge tone={st.tone} dot>
                {st.label}
              </Badge>
            </div>
          </li>
        );
      })}
    </ul>
  );
}

export function QueueEmpty() {
  return <EmptyState title="The queue is empty" description="Jobs appear here when instruments fall due or a lead creates one." />;
}
