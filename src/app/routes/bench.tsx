import { useQueryClient, type QueryClient } from '@tanstack/react-query';
import { Badge } from '../../components/ui/badge';
import { ErrorNotice } from '../../components/ui/error-notice';
import { PageHeader } from '../../components/ui/page-header';
import { ListSkeleton } from '../../components/ui/skeleton';
import { useMe } from '../../features/auth/api/get-me';
import { benchQueryOptions, useBench } from '../../features/bench/api/get-bench';
import { DevicePanels } from '../../features/bench/components/device-panels';
import { RegisteredBenches } from '../../features/bench/components/registered-benches';
import { SimControls } from '../../features/bench/components/sim-controls';
import { StoragePanel } from '../../features/bench/components/storage-panel';
import { WebSerialPanel } from '../../features/bench/components/web-serial-panel';
import { useLiveStream, useLiveStreamNotice } from '../../lib/live-stream';
import { browserBenchIdOf } from '../../../shared/schemas/benches';
import { RouteErrorBoundary } from './route-error';

export const createLoader = (queryClient: QueryClient) => () => {
  void queryClient.prefetchQuery(benchQueryOptions());
  return null;
};

export function Component() {
  const queryClient = useQueryClient();
  const stream = useLiveStream(queryClient);
  const notice = useLiveStreamNotice();
  const me = useMe().data;
  const bench = useBench();
  return (
    <>
      <PageHeader
        title="Bench"
        description="The instruments this server reads, their ports and protocols, live state and counters."
        actions={
          bench.data && (
            <>
              <Badge tone={bench.data.mode === 'sim' ? 'info' : 'accent'}>{bench.data.mode === 'sim' ? 'Simulated instruments' : 'Serial instruments'}</Badge>
              <Badge tone={stream === 'open' ? 'ok' : 'warn'} dot>
                {stream === 'open' ? 'Live' : (notice ?? 'Stream offline')}
              </Badge>
            </>
          )
        }
      />
      {bench.isPending ? (
        <ListSkeleton />
      ) : bench.isError ? (
        <ErrorNotice title="Could not load the bench" error={bench.error} onRetry={() => void bench.refetch()} />
      ) : (
        <div className="flex flex-col gap-6">
          <DevicePanels status={bench.data} />
          <StoragePanel status={bench.data} canAcknowledge={me?.role === 'admin' || me?.role === 'lead'} />
          <p className="text-sm text-ink-muted">
            Sequence <span className="num text-ink">{bench.data.latestSeq}</span>, stored up to <span className="num text-ink">{bench.data.storedSeq ?? '—'}</span>. Port roles and protocol
            profiles are set in the server&apos;s configuration (<span className="num">BENCH_PRESSURE_PORT</span>, <span className="num">BENCH_CURRENT_PORT</span>, <span className="num">BENCH_HART_PORT</span>); this server offers no
            port editing or connection test over the API yet.
          </p>
          {me?.role === 'admin' && bench.data.mode === 'sim' && <SimControls />}
          <RegisteredBenches canManage={me?.role === 'lead' || me?.role === 'admin'} />
          <WebSerialPanel ownBench={me?.role === 'technician' ? browserBenchIdOf(me.id) : null} />
        </div>
      )}
    </>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
