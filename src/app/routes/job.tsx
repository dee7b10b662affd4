import { useQueryClient, type QueryClient } from '@tanstack/react-query';
import { useMemo, useState } from 'react';
import { Link, useNavigate, useParams, type LoaderFunctionArgs } from 'react-router';
import { trimPlan } from '../../../shared/calc';
import type { RunKind } from '../../../shared/schemas/runs';
import { Badge } from '../../components/ui/badge';
import { Button } from '../../components/ui/button';
import { ErrorNotice } from '../../components/ui/error-notice';
import { PageHeader } from '../../components/ui/page-header';
import { ListSkeleton } from '../../components/ui/skeleton';
import { toast } from '../../components/ui/toast';
import { useMe } from '../../features/auth/api/get-me';
import { useBrowserBenchId } from '../../features/bench/web-serial/serial-bridge';
import { useInstrument } from '../../features/jobs/api/get-instrument';
import { jobQueryOptions, useJob } from '../../features/jobs/api/get-job';
import { useStandardOptions } from '../../features/jobs/api/get-standard-options';
import { useStartRun } from '../../features/jobs/api/start-run';
import { useSubmitJob } from '../../features/jobs/api/submit-job';
import { useUpdateChecklist } from '../../features/jobs/api/update-checklist';
import { PreparationPanel } from '../../features/jobs/components/preparation-panel';
import { HartPanel } from '../../features/jobs/components/hart-panel';
import { HartTrimPanel } from '../../features/jobs/components/hart-trim-panel';
import { queryKeys } from '../../lib/query-keys';
import { JobPhotos, StandardCertificates } from '../../features/jobs/components/job-files';
import { ReturnNoticeBanner } from '../../features/jobs/components/return-notice';
import { ReturnPanel } from '../../features/jobs/components/return-panel';
import { RunLauncher } from '../../features/jobs/components/run-launcher';
import { SubmitDialog } from '../../features/jobs/components/submit-dialog';
import { BlockerList, StepRail, StepSection } from '../../features/jobs/components/step-frame';
import { TrimPanel } from '../../features/jobs/components/trim-panel';
import { decisionAdvice } from '../../features/jobs/lib/decision-text';
import { jobSteps, latestRun, modeCheckProblem } from '../../features/jobs/lib/job-steps';
import { useRuns } from '../../features/run/api/get-run';
import { ErrorChart } from '../../features/run/components/error-chart';
import { ResultsTable } from '../../features/run/components/results-table';
import { nominalWords, transferSpecOf } from '../../features/run/lib/live-values';
import { parseResults } from '../../features/run/lib/results';
import { isApiError } from '../../lib/api-client';
import { dpDecimals as dpDecimalsOfSpan, formatNumber, formatRange, unitLabel } from '../../lib/format';
import { useLiveStream } from '../../lib/live-stream';
import { requireMe } from '../auth-guard';
import { RouteErrorBoundary } from './route-error';

export const createLoader =
  (queryClient: QueryClient) =>
  async ({ request, params }: LoaderFunctionArgs) => {
    const me = await requireMe(queryClient, request);
    if (params.id) void queryClient.prefetchQuery(jobQueryOptions(params.id));
    return me;
  };

const JOB_STATUS: Record<string, string> = { open: 'Open', 'in-progress': 'In progress', submitted: 'Submitted', returned: 'Returned', approved: 'Approved' };
const OUTPUT_MODE: Record<string, string> = { linear: 'Linear', 'sqrt-transmitter': 'Square root in transmitter', 'sqrt-host': 'Square root in host' };

export function Component() {
  const { id = '' } = useParams();
  const navigate = useNavigate();
  const queryClient = useQueryClient();
  useLiveStream(queryClient);
  const me = useMe().data;
  const job = useJob(id);
  const instrument = useInstrument(job.data?.instrumentId);
  const register = useStandardOptions();
  const runs = useRuns(job.data?.runs.map((r) => r.id) ?? []);
  const checklist = useUpdateChecklist(id);
  const start = useStartRun(id);
  const submit = useSubmitJob(id);
  const [starting, setStarting] = useState<string | null>(null);
  const [reply, setReply] = useState('');
  const [confirmingSubmit, setConfirmingSubmit] = useState(false);
  const browserBench = useBrowserBenchId();

  const spec = useMemo(() => (instrument.data ? transferSpecOf(instrument.data) : undefined), [instrument.data]);
  const plan = useMemo(() => (spec ? trimPlan(spec) : undefined), [spec]);
  const asFoundRun = latestRun(runs, 'as-found', true);
  const asLeftRun = latestRun(runs, 'as-left', true);
  const asFound = useMemo(() => parseResults(asFoundRun?.results), [asFoundRun?.results]);
  const asLeft = useMemo(() => parseResults(asLeftRun?.results), [asLeftRun?.results]);
  const pointLabels = useMemo(() => (asFoundRun ?? asLeftRun)?.points.map((p) => `${nominalWords(p).replace(' flow', '').replace(' DP', '')}${p.approach === 'up' ? '↑' : '↓'}`) ?? [], [asFoundRun, asLeftRun]);

  if (job.isPending) return <ListSkeleton rows={8} />;
  if (job.isError) return <ErrorNotice title="Could not load the job" error={job.error} onRetry={() => void job.refetch()} />;
  const j = job.data;
  const canEdit = !!me && me.role === 'technician' && j.assigneeId === me.id;
  const ins = instrument.data;
  const rooted = !!ins && ins.outputMode !== 'linear';
  const uLabel = unitLabel(ins?.unit ?? '');
  const dpDecimals = ins ? dpDecimalsOfSpan(ins.urv - ins.lrv) : 3;
  const steps = jobSteps({ job: j, runs, registerMode: ins?.outputMode, trimKinds: plan?.steps.map((s) => s.kind) ?? [] });
  const step = (sid: string) => steps.find((s) => s.id === sid)!;
  const indexOf = (sid: string) => steps.findIndex((s) => s.id === sid) + 1;
  const save = (patch: Parameters<typeof checklist.mutateAsync>[0]) => checklist.mutateAsync(patch);
  const modeRun = latestRun(runs, 'mode-check', true);
  const modeProblem = modeCheckProblem(modeRun, ins?.outputMode);
  const finished = j.status === 'submitted' || j.status === 'approved';

  const startRun = (kind: RunKind, trim?: 'zero-trim' | 'lower-trim' | 'span-trim') => {
    setStarting(trim ?? kind);
    start.mutate({ kind, ...(trim ? { trim } : {}), ...(browserBench ? { benchId: browserBench } : {}) }, {
      onSuccess: (run) => void navigate(`/runs/${run.id}`),
      onError: (e) => {
        toast('The run did not start', { tone: 'error', description: isApiError(e) || e instanceof Error ? e.message : undefined });
        // A refusal may come from the HART check the start made: show what it read.
        void queryClient.invalidateQueries({ queryKey: queryKeys.job(id) });
      },
      onSettled: () => setStarting(null),
    });
  };
  const runsOf = (kind: RunKind) => j.runs.filter((r) => r.kind === kind);
  const canRun = canEdit && j.blockers.length === 0 && !finished;

  return (
    <>
      <PageHeader
        title={
          <span className="flex flex-wrap items-center gap-3">
            <span className="num">{j.tag}</span>
            <Badge tone={j.status === 'approved' ? 'ok' : j.status === 'submitted' ? 'accent' : j.status === 'returned' ? 'warn' : 'info'} dot>
              <span data-testid="job-status" data-status={j.status}>
                {JOB_STATUS[j.status]}
              </span>
            </Badge>
            {j.overdue && <Badge tone="danger">Overdue</Badge>}
          </span>
        }
        description={
          ins ? (
            <>
              {ins.service} · {ins.location} · <span className="num">{formatRange(ins.lrv, ins.urv, ins.unit)}</span> · {OUTPUT_MODE[ins.outputMode]}
              {ins.outputMode !== 'linear' && ins.cutoffMode !== 'none' && (
                <>
                  {' '}
                  · cutoff {ins.cutoffMode} <span className="num">{formatNumber(ins.cutoffValue, 2)}</span> {ins.cutoffMode === 'clamp' ? '% flow' : '% DP'}
                </>
              )}{' '}
              · tolerance <span className="num">±{formatNumber(ins.tolerancePct, 3)} %</span> · due <span className="num">{j.dueOn}</span>
              {j.assigneeName && <> · {j.assigneeName}</>}
            </>
          ) : (
            <>Due {j.dueOn}</>
          )
        }
        actions={
          <Link to="/queue" className="text-sm font-medium text-accent underline-offset-2 hover:underline">
            Back to the queue
          </Link>
        }
      />
      {/* The return loop: the lead's comment stands at the top until the job is resubmitted. */}
      {j.status === 'returned' && j.returned && <ReturnNoticeBanner notice={j.returned} />}
      <StepRail steps={steps} />
      {browserBench && (
        <p className="-mt-3 mb-5 rounded-md border border-info/40 bg-info-soft px-3 py-2 text-sm text-ink" data-testid="browser-bench-note">
          Runs started here use the instruments connected in this browser (bench <span className="num">{browserBench}</span>).
        </p>
      )}
      <div className="flex flex-col gap-5">
        <StepSection step={step('preparation')} index={indexOf('preparation')} description="Choose the standards, record the permit and any interlock bypass, and confirm the loop is safe to work on.">
          <PreparationPanel job={j} register={register.data?.items} canEdit={canEdit} save={save} saving={checklist.isPending} />
          <HartPanel jobId={id} canEdit={canEdit} />
        </StepSection>

        <StepSection
          step={step('mode-check')}
          index={indexOf('mode-check')}
          description="Before the as-found pass: 25 % DP reads about 12 mA with the root in the transmitter, about 8 mA without. A mismatch with the register stops the job here."
        >
          {modeRun?.modeCheck && (
            <p className={`mb-3 font-medium ${modeProblem ? 'text-danger' : 'text-ok'}`} data-testid="job-mode-finding" data-matches={String(modeRun.modeCheck.matchesRegister)}>
              {modeProblem ?? `Found ${formatNumber(modeRun.modeCheck.measuredMa, 3)} mA at 25 % DP — matches the register.`}
            </p>
          )}
          <RunLauncher runs={runsOf('mode-check')} label="Output-mode checks" startLabel={modeRun ? 'Repeat the output-mode check' : 'Start the output-mode check'} canStart={canRun} onStart={() => startRun('mode-check')} starting={starting === 'mode-check'} testId="start-mode-check" />
        </StepSection>

        <StepSection step={step('as-found')} index={indexOf('as-found')} description="The transmitter as it was found, before any adjustment: every point up and back down, captured hands-free.">
          <RunLauncher
            runs={runsOf('as-found')}
            label="As-found runs"
            startLabel="Start the as-found run"
            canStart={canRun && step('as-found').blockers.length === 0}
            onStart={() => startRun('as-found')}
            starting={starting === 'as-found'}
            testId="start-as-found"
          />
        </StepSection>

        {/* Files: as-found photos of the job and the certificates of the standards used. */}
        <section aria-label="Photos and certificates" className="rounded-card border border-line bg-surface p-4 shadow-card sm:p-5" data-testid="job-files">
          <h2 className="text-base font-semibold">Photos and certificates</h2>
          <p className="mb-3 text-sm text-ink-muted">Photos of the transmitter as found (nameplate, gauge, damage), and the certificates of the standards chosen for this job.</p>
          <div className="grid gap-4 md:grid-cols-2">
            <div>
              <h3 className="mb-1 text-sm font-medium">As-found photos</h3>
              <JobPhotos job={j} canEdit={canEdit} />
            </div>
            <div>
              <h3 className="mb-1 text-sm font-medium">Certificates of the standards</h3>
              <StandardCertificates job={j} />
            </div>
          </div>
        </section>

        <StepSection step={step('decision')} index={indexOf('decision')} description="Results per point with uncertainty and decision under the site's rule; as-found and as-left together once both exist.">
          {asFound ? (
            <div className="flex flex-col gap-4">
              <ResultsTable results={asFound} unitLabel={uLabel} rooted={rooted} outputMode={ins?.outputMode} dpDecimals={dpDecimals} caption="As-found results" testId="as-found-results" />
              {ins && <ErrorChart asFound={asFound} asLeft={asLeft} tolerancePct={ins.tolerancePct} labels={pointLabels} rooted={rooted} />}
              <p className="text-sm text-ink-muted" data-testid="decision-advice">
                {decisionAdvice(asFound.overallDecision, asLeft?.overallDecision)}
              </p>
            </div>
          ) : (
            <p className="text-sm text-ink-muted">Results appear here after the as-found run.</p>
          )}
        </StepSection>

        <StepSection step={step('trim')} index={indexOf('trim')} description="Adjust the transmitter with its configurator while Stillpoint captures the readings before and after.">
          {plan && ins ? (
            <TrimPanel
              plan={plan}
              runs={runs}
              unitLabel={uLabel}
              dpDecimals={dpDecimals}
              rooted={ins.outputMode === 'sqrt-transmitter'}
              canStart={canRun && !!asFoundRun}
              starting={starting}
              onStart={(k) => startRun('trim', k)}
            />
          ) : (
            <p className="text-sm text-ink-muted">Loading the instrument…</p>
          )}
          <HartTrimPanel jobId={id} canAct={canRun} />
        </StepSection>

        <StepSection step={step('as-left')} index={indexOf('as-left')} description="The transmitter as it is left: the same points again after the trims.">
          <div className="flex flex-col gap-4">
            <RunLauncher runs={runsOf('as-left')} label="As-left runs" startLabel="Start the as-left run" canStart={canRun && !!asFoundRun} onStart={() => startRun('as-left')} starting={starting === 'as-left'} testId="start-as-left" />
            {asLeft && <ResultsTable results={asLeft} unitLabel={uLabel} rooted={rooted} outputMode={ins?.outputMode} dpDecimals={dpDecimals} caption="As-left results" testId="as-left-results" />}
          </div>
        </StepSection>

        <StepSection step={step('return')} index={indexOf('return')} description="Put the loop back as you found it and hand it back to the operators.">
          <ReturnPanel job={j} canEdit={canEdit} save={save} saving={checklist.isPending} />
        </StepSection>

        <StepSection step={step('submit')} index={indexOf('submit')} description="Hand the job to a lead for review and sign-off.">
          {finished ? (
            <p className="font-medium text-ok" data-testid="submitted">
              Submitted for review.
            </p>
          ) : (
            <div className="flex flex-col gap-3">
              {j.submitBlockers.length === 0 && <p className="text-sm text-ok">Nothing stops the submission.</p>}
              {j.status === 'returned' && j.returned && (
                <div className="flex flex-col gap-1.5">
                  <label htmlFor="submit-reply" className="text-sm font-medium">
                    Your reply to {j.returned.byName}
                  </label>
                  <p className="text-xs text-ink-muted">“{j.returned.comment}” — say what you changed. The reply is kept with the record and sent to the leads.</p>
                  <textarea
                    id="submit-reply"
                    data-testid="submit-reply"
                    value={reply}
                    onChange={(e) => setReply(e.target.value)}
                    rows={3}
                    maxLength={2000}
                    disabled={!canEdit}
                    className="block w-full max-w-2xl rounded-md border border-line bg-surface px-3 py-2 text-ink"
                  />
                </div>
              )}
              <div>
                <Button
                  data-testid="submit-job"
                  disabled={!canEdit || j.submitBlockers.length > 0}
                  loading={submit.isPending}
                  onClick={() => setConfirmingSubmit(true)}
                >
                  Submit for review
                </Button>
              </div>
              <SubmitDialog
                open={confirmingSubmit}
                job={j}
                pending={submit.isPending}
                onClose={() => setConfirmingSubmit(false)}
                onConfirm={() =>
                  submit.mutate(j.status === 'returned' ? { reply: reply.trim() } : undefined, {
                    onSuccess: () => {
                      setReply('');
                      toast(j.status === 'returned' ? 'Resubmitted with your reply' : 'Submitted for review', { tone: 'success' });
                    },
                    onError: (e) => toast('Not submitted', { tone: 'error', description: e instanceof Error ? e.message : undefined }),
                    onSettled: () => setConfirmingSubmit(false),
                  })
                }
              />
              {submit.error && isApiError(submit.error) && submit.error.fields?.submit && <BlockerList items={submit.error.fields.submit} title="The server refused the submission" />}
            </div>
          )}
        </StepSection>
      </div>
    </>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
