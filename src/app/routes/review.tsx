import type { QueryClient } from '@tanstack/react-query';
import { useMemo, useState } from 'react';
import { Link, useParams, type LoaderFunctionArgs } from 'react-router';
import type { ReviewDecision, Revision } from '../../../shared/schemas/records';
import { Badge } from '../../components/ui/badge';
import { Button } from '../../components/ui/button';
import { Dialog } from '../../components/ui/dialog';
import { ErrorNotice } from '../../components/ui/error-notice';
import { PageHeader } from '../../components/ui/page-header';
import { ListSkeleton } from '../../components/ui/skeleton';
import { toast } from '../../components/ui/toast';
import { useMe } from '../../features/auth/api/get-me';
import { reviewQueryOptions, useReview } from '../../features/review/api/get-review';
import { useReviewRuns } from '../../features/review/api/get-run';
import { runQueryOptions } from '../../lib/run-query';
import { reviewTraceQueryOptions, useReviewTrace, type TraceWindow } from '../../features/review/api/get-trace';
import { getRevision } from '../../features/review/api/sign-job';
import { PointTable } from '../../features/review/components/point-table';
import { AuditTrailList, ChecklistSummary, Panel, ReturnExchanges, ReviewPhotos, RevisionList, SignatureList, StandardsUsed } from '../../features/review/components/review-panels';
import { RevisionDialog } from '../../features/review/components/revision-dialog';
import { SignDialog } from '../../features/review/components/sign-dialog';
import { TraceChart } from '../../features/review/components/trace-chart';
import { DECISION_LABELS, DECISION_TONES, defaultRunId, parseResults, pointWindow, RUN_KIND_LABELS, spanWords } from '../../features/review/lib/results';
import { dpDecimals, formatNumber, formatRange, unitLabel } from '../../lib/format';
import { requireMe } from '../auth-guard';
import { RouteErrorBoundary } from './route-error';

export const createLoader =
  (queryClient: QueryClient) =>
  async ({ request, params }: LoaderFunctionArgs) => {
    await requireMe(queryClient, request);
    // Start the record, its first run and that run's trace together, before the page renders.
    void queryClient.fetchQuery(reviewQueryOptions(params.id!)).then((b) => {
      const first = defaultRunId(b.job.runs);
      if (!first) return;
      void queryClient.prefetchQuery(runQueryOptions(first));
      void queryClient.prefetchQuery(reviewTraceQueryOptions(first, null));
    }, () => {});
    return null;
  };

const STATUS_TONE = { open: 'neutral', 'in-progress': 'info', submitted: 'accent', returned: 'warn', approved: 'ok' } as const;

/** The lead's review of a job: every point with its raw trace, results, standards, checklist and audit trail; sign-off. */
export function Component() {
  const { id = '' } = useParams();
  const me = useMe().data;
  const review = useReview(id);
  const runIds = useMemo(() => (review.data?.job.runs ?? []).filter((r) => r.status === 'complete').map((r) => r.id), [review.data]);
  const runs = useReviewRuns(runIds);
  const loadedRuns = runs.flatMap((r) => (r.data ? [r.data] : []));
  const [runId, setRunId] = useState<string | null>(null);
  const shownRunId = runId ?? defaultRunId(review.data?.job.runs ?? []);
  const run = loadedRuns.find((r) => r.id === shownRunId) ?? null;
  const [selected, setSelected] = useState<number | null>(null);
  const [view, setView] = useState<TraceWindow | null>(null);
  // Fetched by run id straight from the record, in parallel with the run itself.
  const trace = useReviewTrace(shownRunId, view);
  const [signing, setSigning] = useState<ReviewDecision | null>(null);
  const [revising, setRevising] = useState(false);
  const [oldRevision, setOldRevision] = useState<Revision | null>(null);

  if (review.isPending) return <ListSkeleton rows={6} />;
  if (review.isError) return <ErrorNotice title="Could not load this job for review" error={review.error} onRetry={() => void review.refetch()} />;
  const { job, instrument, signatures, revisions, audit, performers, canSign, cannotSignReason, exchanges = [] } = review.data;
  const isLead = me?.role === 'lead';
  const results = run ? parseResults(run) : null;
  const unit = unitLabel(instrument.unit);

  const chooseRun = (rid: string) => {
    setRunId(rid);
    setSelected(null);
    setView(null);
  };
  const choosePoint = (index: number) => {
    setSelected(index);
    if (run) setView(pointWindow(run, index));
  };

  return (
    <>
      <PageHeader
        title={
          <span className="flex flex-wrap items-center gap-3">
            Review <span className="num">{job.tag}</span>
            <Badge tone={STATUS_TONE[job.status]} dot>
              {job.status}
            </Badge>
            <span className="text-base font-normal text-ink-muted">revision {job.revision}</span>
          </span>
        }
        description={
          <>
            {instrument.service} · <span className="num">{formatRange(instrument.lrv, instrument.urv, instrument.unit)}</span> · tolerance ±
            <span className="num">{formatNumber(instrument.tolerancePct, 3)}</span> % of span · performed by {performers.map((p) => p.name).join(', ') || '—'}
          </>
        }
        actions={
          <div className="flex flex-wrap gap-2">
            <Link to={`/jobs/${job.id}`} className="inline-flex h-10 items-center rounded-md px-3 text-sm text-accent hover:underline">
              Job page
            </Link>
            {isLead && job.status === 'approved' && (
              <Button variant="secondary" onClick={() => setRevising(true)}>
                Correct (new revision)
              </Button>
            )}
            {isLead && job.status === 'submitted' && (
              <>
                <Button variant="secondary" onClick={() => setSigning('return')} disabled={!canSign}>
                  Return…
                </Button>
                <Button onClick={() => setSigning('approve')} disabled={!canSign}>
                  Approve…
                </Button>
              </>
            )}
          </div>
        }
      />
      {isLead && job.status === 'submitted' && !canSign && cannotSignReason && (
        <p role="status" className="mb-4 rounded-md border border-warn/40 bg-warn-soft px-3 py-2 text-sm text-warn">
          {cannotSignReason}
        </p>
      )}
      <div className="grid gap-6 xl:grid-cols-[minmax(0,1fr)_22rem]">
        <div className="flex min-w-0 flex-col gap-4">
          {/* The return loop: every return with its comment and the technician's reply. */}
          {exchanges.length > 0 && (
            <Panel title="Returns and replies" testId="review-exchange-panel">
              <ReturnExchanges exchanges={exchanges} />
            </Panel>
          )}
          <div className="flex flex-wrap items-center gap-2" role="tablist" aria-label="Runs">
            {loadedRuns.map((r) => {
              const res = parseResults(r);
              return (
                <button
                  key={r.id}
                  role="tab"
                  aria-selected={r.id === run?.id}
                  onClick={() => chooseRun(r.id)}
                  className={`rounded-md border px-3 py-1.5 text-sm ${r.id === run?.id ? 'border-accent bg-accent-soft text-accent' : 'border-line bg-surface text-ink-muted hover:text-ink'}`}
                >
                  {RUN_KIND_LABELS[r.kind] ?? r.kind}
                  {r.trim ? ` (${r.trim})` : ''}
                  {res && <span className="ml-2 text-xs">{DECISION_LABELS[res.overallDecision] ?? res.overallDecision}</span>}
                </button>
              );
            })}
            {runIds.length === 0 && <p className="text-sm text-ink-muted">No completed runs.</p>}
          </div>
          {shownRunId && (
            <section className="rounded-card border border-line bg-surface p-4 shadow-card" aria-label="Raw trace">
              <TraceChart
                run={run}
                trace={trace.data?.runId === shownRunId ? trace.data : undefined}
                loading={trace.isFetching}
                unitLabel={unit}
                selectedIndex={selected}
                view={view}
                onViewChange={setView}
              />
            </section>
          )}
          {run && (
            <>
              {results && (
                <p className="text-sm text-ink-muted">
                  Overall:{' '}
                  <Badge tone={DECISION_TONES[results.overallDecision] ?? 'neutral'}>{DECISION_LABELS[results.overallDecision] ?? results.overallDecision}</Badge>
                  {results.maxHysteresisPctSpan != null && (
                    <>
                      {' '}
                      · largest hysteresis <span className="num">{formatNumber(results.maxHysteresisPctSpan, 3)}</span> % of {spanWords(instrument.outputMode)}
                    </>
                  )}{' '}
                  · hold <span className="num">{run.holdSeconds}</span> s
                </p>
              )}
              <PointTable run={run} selectedIndex={selected} onSelect={choosePoint} outputMode={instrument.outputMode} dpDecimals={dpDecimals(instrument.urv - instrument.lrv)} />
            </>
          )}
          <Panel title="Audit trail of this job">
            <AuditTrailList entries={audit} />
          </Panel>
        </div>
        <aside className="flex flex-col gap-4">
          <Panel title="Standards used" testId="standards-used">
            <StandardsUsed job={job} />
          </Panel>
          <Panel title="As-found photos">
            <ReviewPhotos jobId={job.id} />
          </Panel>
          <Panel title="Checklist">
            <ChecklistSummary checklist={job.checklist} />
          </Panel>
          <Panel title="Signatures">
            <SignatureList signatures={signatures} />
          </Panel>
          <Panel title="Revisions">
            <RevisionList revisions={revisions} onOpen={(n) => void getRevision(job.id, n).then(setOldRevision, (e: Error) => void toast('Could not open that revision', { description: e.message, tone: 'error' }))} />
          </Panel>
        </aside>
      </div>
      {me && (
        <SignDialog
          jobId={job.id}
          tag={job.tag}
          revision={job.revision}
          decision={signing}
          signerName={me.name}
          signerEmail={me.email}
          onClose={() => setSigning(null)}
          onSigned={() => {
            setSigning(null);
            void review.refetch();
          }}
        />
      )}
      <RevisionDialog
        jobId={job.id}
        revision={job.revision}
        open={revising}
        onClose={() => setRevising(false)}
        onOpened={() => {
          setRevising(false);
          void review.refetch();
        }}
      />
      <Dialog open={!!oldRevision} onClose={() => setOldRevision(null)} title={`Revision ${oldRevision?.revision ?? ''} as approved`} className="w-[min(56rem,calc(100vw-2rem))]">
        {oldRevision && (
          <div className="flex flex-col gap-3 text-sm">
            <p className="text-ink-muted">Superseded: “{oldRevision.reason}” ({oldRevision.createdByName}).</p>
            <SignatureList signatures={oldRevision.snapshot.signatures} />
            <ChecklistSummary checklist={oldRevision.snapshot.job.checklist} />
            <p>
              {oldRevision.snapshot.runs.length} run(s):{' '}
              {oldRevision.snapshot.runs.map((r) => `${RUN_KIND_LABELS[r.kind] ?? r.kind} (${r.points.length} points)`).join(', ')}
            </p>
          </div>
        )}
      </Dialog>
    </>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
