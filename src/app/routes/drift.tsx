import type { QueryClient } from '@tanstack/react-query';
import { useParams, type LoaderFunctionArgs } from 'react-router';
import { Badge } from '../../components/ui/badge';
import { Button } from '../../components/ui/button';
import { ErrorNotice } from '../../components/ui/error-notice';
import { PageHeader } from '../../components/ui/page-header';
import { ListSkeleton } from '../../components/ui/skeleton';
import { toast } from '../../components/ui/toast';
import { useMe } from '../../features/auth/api/get-me';
import { driftQueryOptions, useAcceptInterval, useDrift } from '../../features/drift/api/get-drift';
import { DriftChart } from '../../features/drift/components/drift-chart';
import { isApiError } from '../../lib/api-client';
import { formatNumber } from '../../lib/format';
import { requireMe } from '../auth-guard';
import { RouteErrorBoundary } from './route-error';

export const createLoader =
  (queryClient: QueryClient) =>
  async ({ request, params }: LoaderFunctionArgs) => {
    await requireMe(queryClient, request);
    void queryClient.prefetchQuery(driftQueryOptions(params.id!));
    return null;
  };

const METHOD = { staircase: 'Staircase (ILAC-G24 / OIML D 10)', reliability: 'Exponential reliability model, with the Clopper–Pearson interval test' } as const;

/** Drift and interval review of one tag. */
export function Component() {
  const { id = '' } = useParams();
  const me = useMe().data;
  const q = useDrift(id);
  const accept = useAcceptInterval(id);
  if (q.isPending) return <ListSkeleton />;
  if (q.isError) return <ErrorNotice title="Could not load the drift history" error={q.error} onRetry={() => void q.refetch()} />;
  const d = q.data;
  const i = d.instrument;
  const canAccept = me?.role === 'lead';
  return (
    <>
      <PageHeader
        title={
          <>
            Drift · <span className="num">{i.tag}</span>
          </>
        }
        description={
          <>
            {i.service}. <span className="num">{d.calibrations}</span> approved calibrations, <span className="num">{d.inTolerance}</span> found in tolerance.
            Interval <span className="num">{i.intervalDays}</span> d; next due <span className="num">{i.nextDueOn ?? '—'}</span>.
          </>
        }
      />
      {d.calibrations === 0 ? (
        <p className="text-sm text-ink-muted">No approved calibrations yet: drift needs at least two.</p>
      ) : (
        <div className="flex flex-col gap-6">
          <section className="rounded-card border border-line bg-surface p-4 shadow-card">
            <DriftChart points={d.points} tolerance={d.tolerancePct} dueOn={i.nextDueOn} />
          </section>
          {d.governing && (
            <p className="rounded-md border border-accent/40 bg-accent-soft px-3 py-2 text-sm text-ink" data-testid="governing-interval">
              <strong>
                {METHOD[d.governing.method]} governs: <span className="num">{d.recommendations.find((r) => r.method === d.governing!.method)?.recommendedDays}</span> d.
              </strong>{' '}
              {d.governing.reason}
            </p>
          )}
          <section aria-label="Interval recommendations" className="grid gap-3 md:grid-cols-2">
            {d.recommendations.map((r) => (
              <div key={r.method} className={`rounded-card border bg-surface p-4 shadow-card ${d.governing?.method === r.method ? 'border-accent' : 'border-line'}`}>
                <h2 className="text-sm font-semibold">
                  {METHOD[r.method]}{' '}
                  {d.governing && <span className="font-normal text-ink-muted">{d.governing.method === r.method ? '· governs' : '· for comparison'}</span>}
                </h2>
                <p className="mt-1 text-2xl">
                  <span className="num">{r.recommendedDays}</span> d{' '}
                  <Badge tone={r.action === 'shorten' ? 'danger' : r.action === 'extend' ? 'ok' : 'neutral'}>{r.action}</Badge>
                </p>
                <p className="mt-2 text-sm text-ink-muted">{r.basis}</p>
                {canAccept && r.recommendedDays !== i.intervalDays && (!d.governing || d.governing.method === r.method) && (
                  <Button
                    className="mt-3"
                    size="sm"
                    loading={accept.isPending}
                    onClick={() =>
                      accept.mutate(
                        { intervalDays: r.recommendedDays, method: r.method },
                        {
                          onSuccess: () => {
                            toast(`Interval of ${i.tag} set to ${r.recommendedDays} days`, { tone: 'success' });
                            void q.refetch();
                          },
                          onError: (e) => toast('Not changed', { description: isApiError(e) ? e.message : String(e), tone: 'error' }),
                        },
                      )
                    }
                  >
                    Accept {r.recommendedDays} d
                  </Button>
                )}
              </div>
            ))}
          </section>
          <section className="relative overflow-x-auto rounded-card border border-line bg-surface shadow-card">
            <table className="w-full text-sm" aria-label="Drift per point">
              <thead className="bg-sunken/60 text-left text-xs tracking-wide text-ink-muted">
                <tr>
                  <th className="px-3 py-2">Point</th>
                  <th className="px-3 py-2 text-right">Last as-found</th>
                  <th className="px-3 py-2 text-right">Last drift / interval</th>
                  <th className="px-3 py-2 text-right">Mean drift / year</th>
                  <th className="px-3 py-2 text-right">Predicted at due</th>
                </tr>
              </thead>
              <tbody>
                {d.points.map((p) => {
                  const rates = p.drifts.map((x) => x.ratePerDay).filter((x): x is number => x !== null);
                  const mean = rates.length ? (rates.reduce((a, b) => a + b, 0) / rates.length) * 365 : null;
                  const over = p.predictedAtDue !== null && Math.abs(p.predictedAtDue) > d.tolerancePct;
                  return (
                    <tr key={p.key} className="border-t border-line">
                      <td className="num px-3 py-2">
                        {p.nominalPct} % {p.basis === 'flow' ? 'flow' : 'DP'} {p.direction === 'up' ? '↑' : '↓'}
                      </td>
                      <td className="num px-3 py-2 text-right">{formatNumber(p.events.at(-1)?.asFound ?? NaN, 3)}</td>
                      <td className="num px-3 py-2 text-right">{p.drifts.length ? formatNumber(p.drifts.at(-1)!.drift, 3) : '—'}</td>
                      <td className="num px-3 py-2 text-right">{mean === null ? '—' : formatNumber(mean, 3)}</td>
                      <td className={`num px-3 py-2 text-right ${over ? 'font-semibold text-danger' : ''}`}>{p.predictedAtDue === null ? '—' : formatNumber(p.predictedAtDue, 3)}</td>
                    </tr>
                  );
                })}
              </tbody>
            </table>
            <p className="px-3 py-2 text-xs text-ink-muted">Errors in % of span (of flow span for rooted outputs). Drift per interval = as-found minus the previous as-left.</p>
          </section>
        </div>
      )}
    </>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
