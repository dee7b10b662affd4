import { useQueryClient } from '@tanstack/react-query';
import { useEffect, useMemo, useRef, useState } from 'react';
import { Link } from 'react-router';
import { convertPressure, isPressureUnitId, trimPlan } from '../../../../shared/calc';
import type { Instrument } from '../../../../shared/schemas/instruments';
import type { Run, RunPoint } from '../../../../shared/schemas/runs';
import { Button } from '../../../components/ui/button';
import { Dialog } from '../../../components/ui/dialog';
import { ReasonDialog } from '../../../components/ui/reason-dialog';
import { toast } from '../../../components/ui/toast';
import { dpDecimals as dpDecimalsOfSpan, formatFixed, formatNumber, unitLabel as unitText } from '../../../lib/format';
import { useLiveStream } from '../../../lib/live-stream';
import { liveSamples, useLatestSamples } from '../../../stores/live-samples';
import { useLiveRun } from '../../../stores/live-run';
import { useRunAction } from '../api/run-actions';
import { useCaptureSound, useSoundPref } from '../hooks/use-capture-sound';
import { useShortcutPref, useShortcuts, type Shortcut } from '../hooks/use-shortcuts';
import { approachWords, liveValues, nominalWords, transferSpecOf } from '../lib/live-values';
import { buildBanners } from '../lib/banners';
import { flowViewOf } from '../lib/flow';
import { RUN_KIND_LABEL, TRIM_LABEL } from '../lib/labels';
import { parseResults } from '../lib/results';
import { CurrentPoint } from './current-point';
import { LiveTrace } from './live-trace';
import { PointList } from './point-list';
import { Readouts } from './readouts';
import { ResultsTable } from './results-table';
import { HartErrorsTable } from './hart-errors-table';
import { ShortcutHelp } from './shortcut-help';
import { ModeCheckPanel } from './mode-check-panel';
import { RunStatusBadge, StreamDot } from './run-status';
import { WarningBanner } from './warning-banner';

export interface CaptureScreenProps {
  run: Run;
  instrument: Instrument | undefined;
  tag: string | undefined;
  /** The signed-in user may act on the run (the assigned technician). */
  canAct: boolean;
  /** The signed-in user's id: the shortcut switch is remembered per user in this browser. */
  userId?: string | undefined;
}

/** The bench screen of a run: live numerals, trace, current point and hold, warnings, point list. */
export function CaptureScreen({ run, instrument, tag, canAct, userId }: CaptureScreenProps) {
  const queryClient = useQueryClient();
  const streamStatus = useLiveStream(queryClient, run.status === 'running' || run.status === 'paused' ? run.id : null);
  // Only this run's bench feeds the numerals and the trace.
  useEffect(() => {
    liveSamples.setBench(run.benchId ?? null);
  }, [run.benchId]);
  const spec = useMemo(() => (instrument ? transferSpecOf(instrument) : undefined), [instrument]);
  const unit = spec?.range.unit ?? run.unit;
  const unitLabel = unitText(unit);
  const dpDecimals = spec ? dpDecimalsOfSpan(spec.range.urv - spec.range.lrv) : 3;
  const rooted = !!instrument && instrument.outputMode !== 'linear';
  const samples = useLatestSamples();
  const values = liveValues(spec, samples.pressure?.value, samples.pressureUnit, samples.current?.value);
  // Flow in engineering units beside % flow (orifice primary element, ISO 5167-2).
  const flow = useMemo(() => flowViewOf(instrument), [instrument]);
  const liveFlow = flow?.at(values.appliedDp);
  const toInstrumentUnit = useMemo(() => {
    const from = samples.pressureUnit;
    if (!from || from === unit || !isPressureUnitId(from) || !isPressureUnitId(unit)) return undefined;
    return (v: number) => convertPressure(v, from, unit);
  }, [samples.pressureUnit, unit]);

  const action = useRunAction(run.id);
  const sound = useCaptureSound();
  const { muted, setMuted } = useSoundPref();
  const [manualFor, setManualFor] = useState<RunPoint | null>(null);
  const [redoFor, setRedoFor] = useState<RunPoint | null>(null);
  const [redoReason, setRedoReason] = useState('');
  const [aborting, setAborting] = useState(false);
  const [flash, setFlash] = useState<{ index: number; at: number } | null>(null);

  const active = run.status === 'running' || run.status === 'paused';
  const current = run.points.find((p) => p.index === run.currentIndex) ?? run.points.find((p) => p.state !== 'captured') ?? null;
  const results = useMemo(() => parseResults(run.results), [run.results]);
  const lastCaptured = [...run.points].reverse().find((p) => p.state === 'captured') ?? null;

  // Confirm each new capture: a flash on screen and a short sound (from the stream or a refetch).
  const capturedRef = useRef<Set<number> | null>(null);
  useEffect(() => {
    const now = new Set(run.points.filter((p) => p.state === 'captured').map((p) => p.index));
    const before = capturedRef.current;
    capturedRef.current = now;
    if (!before) return;
    const fresh = [...now].filter((i) => !before.has(i));
    if (fresh.length) {
      setFlash({ index: fresh[fresh.length - 1]!, at: Date.now() });
      sound('captured');
    }
  }, [run.points, sound]);
  useEffect(() => {
    if (!flash) return;
    const t = setTimeout(() => setFlash(null), 3500);
    return () => clearTimeout(t);
  }, [flash]);

  // Warnings for this run's current point (a disconnect whatever the point), plus what the client sees itself.
  const liveWarnings = useLiveRun((s) => s.warnings);
  const devices = useLiveRun((s) => s.devices);
  const dismiss = useLiveRun((s) => s.dismiss);
  const banners = buildBanners({ run, current, liveWarnings, devices, values, streamStatus, active, dpDecimals, unitLabel });
  const bannerKey = banners.map((b) => b.kind).join();
  const prevBanner = useRef('');
  useEffect(() => {
    const added = bannerKey.split(',').some((k) => k && !prevBanner.current.split(',').includes(k));
    prevBanner.current = bannerKey;
    if (added) sound('warning');
  }, [bannerKey, sound]);

  const act = (a: Parameters<typeof action.mutateAsync>[0], done?: string) =>
    action.mutateAsync(a).then(
      () => done && toast(done, { tone: 'success' }),
      (e: unknown) => {
        toast('Refused', { tone: 'error', description: e instanceof Error ? e.message : undefined });
        throw e;
      },
    );

  const shortcuts: Shortcut[] = [
    { key: 'm', cap: 'M', label: 'Manual capture', enabled: canAct && active && !!current && current.state !== 'captured', run: () => current && setManualFor(current) },
    { key: 'r', cap: 'R', label: 'Redo last captured point', enabled: canAct && active && !!lastCaptured, run: () => lastCaptured && setRedoFor(lastCaptured) },
    { key: 'p', cap: 'P', label: run.status === 'paused' ? 'Resume' : 'Pause', enabled: canAct && active, run: () => void act({ type: run.status === 'paused' ? 'resume' : 'pause' }).catch(() => {}) },
    { key: 's', cap: 'S', label: muted ? 'Sound on' : 'Sound off', run: () => setMuted(!muted) },
  ];
  const shortcutPref = useShortcutPref(userId);
  useShortcuts(shortcuts, shortcutPref.on);

  const trimStep = run.kind === 'trim' && spec ? trimPlan(spec).steps.find((s) => s.kind === run.trim) : undefined;

  return (
    <div className="flex flex-col gap-4" data-testid="capture-screen" data-run-status={run.status}>
      <header className="flex flex-wrap items-center gap-x-3 gap-y-2">
        <div className="min-w-0 flex-1 basis-72">
          <p className="text-sm text-ink-muted">
            <Link to={`/jobs/${run.jobId}`} className="font-medium text-accent underline-offset-2 hover:underline">
              ← {tag ?? 'Job'}
            </Link>{' '}
            · {instrument?.service}
          </p>
          <h1 className="mt-0.5 flex flex-wrap items-center gap-x-3 gap-y-1 text-xl font-semibold tracking-tight text-ink sm:text-2xl">
            <span className="num">{tag}</span> {RUN_KIND_LABEL[run.kind]}
            {run.trim && <span className="text-ink-muted">· {TRIM_LABEL[run.trim] ?? run.trim}</span>}
            <RunStatusBadge status={run.status} />
          </h1>
        </div>
        <div className="flex flex-wrap items-center gap-2">
        <StreamDot status={streamStatus} />
        <Button variant="ghost" size="sm" onClick={() => setMuted(!muted)} aria-pressed={!muted} data-testid="sound-toggle">
          {muted ? 'Sound off' : 'Sound on'}
        </Button>
        {canAct && active && (
          <>
            <Button variant="secondary" onClick={() => void act({ type: run.status === 'paused' ? 'resume' : 'pause' }).catch(() => {})} loading={action.isPending && action.variables?.type !== 'capture'}>
              {run.status === 'paused' ? 'Resume' : 'Pause'}
            </Button>
            <Button variant="secondary" onClick={() => current && setManualFor(current)} disabled={!current || current.state === 'captured'} data-testid="manual-capture">
              Manual capture
            </Button>
            <Button variant="danger" onClick={() => setAborting(true)}>
              Abort
            </Button>
          </>
        )}
        </div>
      </header>

      {run.kind === 'mode-check' && <ModeCheckPanel run={run} measuredMa={values.measuredMa} registerMode={instrument?.outputMode} />}
      {run.kind === 'trim' && trimStep && (
        <div className="rounded-card border border-info/40 bg-info-soft px-4 py-3 text-ink" data-testid="trim-guide">
          <p className="font-semibold">
            {TRIM_LABEL[trimStep.kind]} at <span className="num">{formatNumber(trimStep.dpPct, 2)} % DP</span>
            {trimStep.flowPct !== undefined && (
              <>
                {' '}
                (<span className="num">{formatNumber(trimStep.flowPct, 2)} % flow</span>)
              </>
            )}
          </p>
          <p className="mt-1 text-sm">
            Apply <span className="num font-semibold">{formatFixed(trimStep.targetDp, dpDecimals)}</span> {unitLabel}, run the transmitter&apos;s {TRIM_LABEL[trimStep.kind]?.toLowerCase()} with your
            configurator until it reads <span className="num font-semibold">{formatNumber(trimStep.expectedMa, 3)} mA</span>. Stillpoint captures the reading before and after.
          </p>
        </div>
      )}

      <WarningBanner items={banners} onDismiss={(k) => current && (k === 'unstable' || k === 'overshoot') && dismiss(k, run.id, current.index)} />

      {flash && (
        <div role="status" data-testid="capture-flash" className="flex items-center gap-3 rounded-card border-2 border-state-captured bg-ok-soft px-4 py-3 text-lg font-semibold text-state-captured">
          <svg viewBox="0 0 24 24" className="size-7" aria-hidden="true">
            <path d="M4 12.5l5 5 11-11" fill="none" stroke="currentColor" strokeWidth="2.6" strokeLinecap="round" strokeLinejoin="round" />
          </svg>
          Point {flash.index + 1} captured
          {(() => {
            const p = run.points[flash.index];
            const next = run.points.find((x) => x.state !== 'captured');
            return (
              <span className="text-base font-normal text-ink">
                {p?.capture && (
                  <>
                    <span className="num">{formatNumber(p.capture.measuredMa, 4)} mA</span> at <span className="num">{formatFixed(p.capture.appliedDp, dpDecimals)}</span> {unitLabel}.{' '}
                  </>
                )}
                {next ? (
                  <>
                    Next: <span className="num">{nominalWords(next)}</span>, {approachWords(next.approach)}.
                  </>
                ) : (
                  'All points captured.'
                )}
              </span>
            );
          })()}
        </div>
      )}

      {run.status === 'complete' && (
        <div className="flex flex-wrap items-center justify-between gap-3 rounded-card border border-ok/50 bg-ok-soft px-4 py-3" data-testid="run-complete">
          <p className="font-semibold text-ok">Run complete. Every point is captured.</p>
          <Link to={`/jobs/${run.jobId}`} className="font-medium text-accent underline-offset-2 hover:underline">
            Back to the job
          </Link>
        </div>
      )}
      {run.status === 'aborted' && <p className="rounded-card border border-line bg-sunken px-4 py-3 text-ink-muted">This run was aborted; its captures are kept but it does not count.</p>}

      {/* The point table beside the live numbers from 1280 px; below them on narrower screens. */}
      <div className="grid gap-4 xl:grid-cols-[minmax(0,1fr)_28rem]">
        <div className="flex min-w-0 flex-col gap-4">
          {current && active && (
            <CurrentPoint runId={run.id} point={current} total={run.points.length} holdSeconds={run.holdSeconds} unitLabel={unitLabel} dpDecimals={dpDecimals} paused={run.status === 'paused'} targetFlow={flow ? flow.text(flow.at(current.targetDp)?.flow) : undefined} />
          )}
          <Readouts
            values={values}
            unitLabel={unitLabel}
            rooted={rooted}
            tolerancePct={instrument?.tolerancePct}
            dpDecimals={dpDecimals}
            flow={flow ? { text: flow.text(liveFlow?.flow), departure: flow.departure(liveFlow?.pureRootDeparturePct) } : undefined}
          />
          <div className="rounded-card border border-line bg-surface p-4 shadow-card">
            <LiveTrace unitLabel={unitLabel} toInstrumentUnit={toInstrumentUnit} target={current && active ? current : null} runId={run.id} pointIndex={current?.index ?? null} />
          </div>
        </div>
        <div className="flex min-w-0 flex-col gap-3">
          <PointList
            points={run.points}
            currentIndex={run.currentIndex}
            results={results}
            dpDecimals={dpDecimals}
            rooted={rooted}
            canAct={canAct && active}
            paused={run.status === 'paused'}
            onRedo={(i) => setRedoFor(run.points[i] ?? null)}
            flow={flow}
          />
          <ShortcutHelp shortcuts={shortcuts} on={shortcutPref.on} onChange={shortcutPref.setOn} />
        </div>
      </div>

      {results && run.kind !== 'mode-check' && (
        <section aria-labelledby="run-results">
          <h2 id="run-results" className="mb-2 text-lg font-semibold text-ink">
            Results
          </h2>
          <ResultsTable results={results} unitLabel={unitLabel} rooted={rooted} outputMode={instrument?.outputMode} dpDecimals={dpDecimals} caption={`${RUN_KIND_LABEL[run.kind]} results`} testId="run-results" />
        </section>
      )}
      {!results && run.resultsProblem && <p className="text-sm text-warn">Results cannot be computed yet: {run.resultsProblem}</p>}
      <HartErrorsTable run={run} unitLabel={unitLabel} dpDecimals={dpDecimals} />

      <ReasonDialog
        open={!!manualFor}
        title={`Capture ${manualFor ? `point ${manualFor.index + 1} (${nominalWords(manualFor)})` : ''} manually`}
        description="The point is captured now from the readings so far, flagged as manual, with your reason."
        submitLabel="Capture now"
        placeholder="e.g. pump noise keeps the reading from settling; reading steady by eye for 60 s"
        pending={action.isPending}
        onClose={() => setManualFor(null)}
        onSubmit={async (reason) => {
          if (!manualFor) return;
          await act({ type: 'capture', index: manualFor.index, reason }, `Point ${manualFor.index + 1} captured manually`);
          setManualFor(null);
        }}
      />
      <Dialog
        open={!!redoFor}
        onClose={() => setRedoFor(null)}
        title={redoFor ? `Redo point ${redoFor.index + 1}?` : ''}
        description="The captured reading is kept in the record but replaced: the point is measured again, approached from the correct side."
        footer={
          <>
            <Button variant="secondary" onClick={() => setRedoFor(null)}>
              Cancel
            </Button>
            <Button
              loading={action.isPending}
              data-testid="confirm-redo"
              onClick={() => {
                if (redoFor)
                  void act({ type: 'redo', index: redoFor.index, reason: redoReason.trim() || undefined }, `Point ${redoFor.index + 1} will be measured again`).then(
                    () => {
                      setRedoFor(null);
                      setRedoReason('');
                    },
                    () => {},
                  );
              }}
            >
              Redo the point
            </Button>
          </>
        }
      >
        <label className="flex flex-col gap-1 text-sm font-medium text-ink">
          Reason (optional; it goes on the certificate)
          <textarea
            value={redoReason}
            onChange={(e) => setRedoReason(e.target.value)}
            maxLength={500}
            rows={2}
            data-testid="redo-reason"
            className="rounded-md border border-line-strong bg-surface px-3 py-2 text-sm font-normal text-ink focus-visible:outline-2 focus-visible:outline-focus"
          />
        </label>
      </Dialog>
      <Dialog
        open={aborting}
        onClose={() => setAborting(false)}
        title="Abort this run?"
        description="The run stops and does not count towards the job. Captured readings stay in the record."
        footer={
          <>
            <Button variant="secondary" onClick={() => setAborting(false)}>
              Keep running
            </Button>
            <Button variant="danger" loading={action.isPending} onClick={() => void act({ type: 'abort' }, 'Run aborted').then(() => setAborting(false), () => {})}>
              Abort run
            </Button>
          </>
        }
      />
    </div>
  );
}
