import type { QueryClient } from '@tanstack/react-query';
import { Link, useParams, type LoaderFunctionArgs } from 'react-router';
import { Logo } from '../../components/layout/logo';
import { ThemeToggle } from '../../components/layout/theme-toggle';
import { ErrorNotice } from '../../components/ui/error-notice';
import { ListSkeleton } from '../../components/ui/skeleton';
import { useMe } from '../../features/auth/api/get-me';
import { useInstrument } from '../../features/jobs/api/get-instrument';
import { useJob } from '../../features/jobs/api/get-job';
import { runQueryOptions, useRun } from '../../features/run/api/get-run';
import { CaptureScreen } from '../../features/run/components/capture-screen';
import { requireMe } from '../auth-guard';
import { RouteErrorBoundary } from './route-error';

/**
 * The capture screen of a run, outside the app shell: the whole width for numerals readable at
 * two metres on a laptop or a tablet at the bench.
 */
export const createLoader =
  (queryClient: QueryClient) =>
  async ({ request, params }: LoaderFunctionArgs) => {
    const me = await requireMe(queryClient, request);
    if (params.id) void queryClient.prefetchQuery(runQueryOptions(params.id));
    return me;
  };

export function Component() {
  const { id = '' } = useParams();
  const me = useMe().data;
  const run = useRun(id);
  const job = useJob(run.data?.jobId);
  const instrument = useInstrument(job.data?.instrumentId);
  const canAct = !!me && me.role === 'technician' && !!job.data && job.data.assigneeId === me.id;
  return (
    <div className="flex min-h-dvh flex-col">
      <header className="flex h-12 items-center gap-3 border-b border-line bg-surface/95 px-3 sm:px-4">
        <Link to="/queue" className="flex items-center gap-2 text-accent" aria-label="Stillpoint queue">
          <Logo className="size-6" />
          <span className="text-base font-semibold tracking-tight text-ink">Stillpoint</span>
        </Link>
        <span className="text-sm text-ink-muted">Run</span>
        <div className="ml-auto flex items-center gap-3">
          {me && <span className="hidden text-sm text-ink-muted sm:block">{me.name}</span>}
          <ThemeToggle />
        </div>
      </header>
      <main id="main" className="flex-1 px-3 py-4 md:px-6">
        {run.isPending ? (
          <ListSkeleton rows={6} />
        ) : run.isError ? (
          <ErrorNotice title="Could not load the run" error={run.error} onRetry={() => void run.refetch()} />
        ) : (
          <CaptureScreen run={run.data} instrument={instrument.data} tag={job.data?.tag} canAct={canAct} userId={me?.id} />
        )}
      </main>
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
