import { useQueryClient } from '@tanstack/react-query';
import { useEffect, useMemo, useRef, useState } from 'react';
import { Link } from 'react-router';
import { checkOutputMode, convertPressure, isPressureUnitId, isRootedOutput, trimPlan } from '../../../../shared/calc';
import type { Instrument } from '../../../../shared/schemas/instruments';
import type { Run, RunPoint } from '../../../../shared/schemas/runs';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { Dialog } from '../../../components/ui/dialog';
import { toast } from '../../../components/ui/toast';
import { cn } from '../../../lib/cn';
import { dpDecimals as dpDecimalsOfSpan, formatFixed, formatNumber, unitLabel as unitText } from '../../../lib/format';
import { useLiveStream, useLiveStreamNotice, type LiveStatus } from '../../../lib/live-stream';
import { liveSamples, useLatestSamples } from '../../../stores/live-samples';
import { useLiveRun } from '../../../stores/live-run';
import { useRunAction } from '../api/run-actions';
import { useCaptureSound, useSoundPref } from '../hooks/use-capture-sound';
import { useShortcutPref, useShortcuts, type Shortcut } from '../hooks/use-shortcuts';
import { approachWords, liveValues, ne43Problem, nominalWords, transferSpecOf } from '../lib/live-values';
import { flowViewOf } from '../lib/flow';
import { parseResults } from '../lib/results';
import { CurrentPoint } from './current-point';
import { LiveTrace } from './live-trace';
import { ManualCaptureDialog } from './manual-capture-dialog';
import { PointList } from './point-list';
import { Readouts } from './readouts';
import { ResultsTable } from './results-table';
import { ShortcutHelp } from './shortcut-help';
import { WarningBanner, type BannerItem } from './warning-banner';

export const RUN_KIND_LABEL: Record<Run['kind'], string> = {
  'mode-check': 'Output-mode check',
  'as-found': 'As-found',
  trim: 'Trim',
  'as-left': 'As-left',
};

const TRIM_LABEL: Record<string, string> = { 'zero-trim': 'Zero trim', 'lower-trim': 'Lower trim', 'span-trim': 'Span trim' };

/** Decimals for DP values: shared/format's one rule (last digit ≤ 0.01 % of span), as on the certificate. */
export function dpDecimalsFor(span: number): number {
  return dpDecimalsOfSpan(span);
}

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
  const dpDecimals = spec ? dpDecimalsFor(spec.range.urv - spec.range.lrv) : 3;
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

      <ManualCaptureDialog
        open={!!manualFor}
        pointLabel={manualFor ? `point ${manualFor.index + 1} (${nominalWords(manualFor)})` : ''}
        pending={action.isPending}
        onClose={() => setManualFor(null)}
        onCapture={async (reason) => {
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

function RunStatusBadge({ status }: { status: Run['status'] }) {
  const map = { running: ['Running', 'holding'], paused: ['Paused', 'warn'], complete: ['Complete', 'ok'], aborted: ['Aborted', 'neutral'] } as const;
  const [label, tone] = map[status];
  return (
    <Badge tone={tone} dot className="text-sm" >
      <span data-testid="run-status">{label}</span>
    </Badge>
  );
}

function StreamDot({ status }: { status: LiveStatus }) {
  const ok = status === 'open';
  const notice = useLiveStreamNotice();
  return (
    <span className="inline-flex items-center gap-1.5 text-xs text-ink-muted" data-testid="stream-status" data-status={status} title={notice ?? undefined}>
      <span aria-hidden="true" className={cn('size-2 rounded-full', ok ? 'bg-ok' : status === 'reconnecting' ? 'animate-pulse bg-warn' : 'bg-ink-faint')} />
      {ok ? 'Live' : status === 'reconnecting' ? 'Reconnecting…' : status === 'connecting' ? 'Connecting…' : status === 'signed-out' ? (notice ?? 'Signed out') : 'Offline'}
    </span>
  );
}

function ModeCheckPanel({ run, measuredMa, registerMode }: { run: Run; measuredMa: number | null; registerMode: string | undefined }) {
  const finding = run.modeCheck;
  const preview = measuredMa === null ? null : checkOutputMode(measuredMa);
  const words = { 'root-in-transmitter': 'square root in the transmitter (about 12 mA)', 'linear-output': 'output linear in DP (about 8 mA)', 'cannot-tell': 'cannot tell (near neither 8 nor 12 mA)' } as const;
  const register = registerMode ? (isRootedOutput(registerMode as 'linear') ? 'square root in the transmitter' : 'output linear in DP') : '—';
  return (
    <section aria-label="Output-mode check" data-testid="mode-check" className={cn('rounded-card border px-4 py-3', finding && !finding.matchesRegister ? 'border-2 border-danger bg-danger-soft' : 'border-line bg-surface')}>
      <p className="text-ink">
        Apply <span className="num font-semibold">25 % DP</span>. A transmitter that takes the square root reads about <span className="num">12 mA</span> (50 % flow); one that does not reads
        about <span className="num">8 mA</span>. The register says: <span className="font-semibold">{register}</span>.
      </p>
      {finding ? (
        <p className={cn('mt-2 text-lg font-semibold', finding.matchesRegister ? 'text-ok' : 'text-danger')} data-testid="mode-check-finding" data-finding={finding.finding} data-matches={String(finding.matchesRegister)}>
          Found <span className="num">{formatNumber(finding.measuredMa, 3)} mA</span>: {words[finding.finding]}.{' '}
          {finding.matchesRegister ? 'Matches the register.' : 'Does not match the register — stop. Correct the register or the transmitter configuration, then repeat the check.'}
        </p>
      ) : (
        preview && (
          <p className="mt-2 text-sm text-ink-muted">
            Now reading <span className="num">{formatNumber(measuredMa ?? 0, 3)} mA</span>: {words[preview.decision]}.
          </p>
        )
      )}
    </section>
  );
}

function buildBanners({
  run,
  current,
  liveWarnings,
  devices,
  values,
  streamStatus,
  active,
  dpDecimals,
  unitLabel,
}: {
  run: Run;
  current: RunPoint | null;
  liveWarnings: ReturnType<typeof useLiveRun.getState>['warnings'];
  devices: ReturnType<typeof useLiveRun.getState>['devices'];
  values: ReturnType<typeof liveValues>;
  streamStatus: LiveStatus;
  active: boolean;
  dpDecimals: number;
  unitLabel: string;
}): BannerItem[] {
  if (!active) return [];
  const out = new Map<BannerItem['kind'], BannerItem>();
  for (const w of liveWarnings) {
    if (w.runId !== run.id) continue;
    if (w.kind !== 'disconnect' && w.index !== current?.index) continue;
    out.set(w.kind, { kind: w.kind, message: w.message, rate: w.ratePctSpanPerMin });
  }
  // Opened mid-point (the warning went out before this page connected): fall back on the point's flags.
  if (current && (current.state === 'approaching' || current.state === 'settling')) {
    if (current.flags.includes('leak') && !out.has('leak') && current.state === 'settling')
      out.set('leak', { kind: 'leak', message: current.warning ?? 'The applied DP moves with the source isolated.', rate: null });
    if (current.flags.includes('overshoot') && !out.has('overshoot'))
      out.set('overshoot', { kind: 'overshoot', message: `The applied DP went past the target of point ${current.index + 1} on the approach.` });
  }
  const leak = out.get('leak');
  if (leak) leak.action = 'Check the fittings, the tubing and the manifold valves.';
  const over = out.get('overshoot');
  if (over && current) {
    // The action below says where to go and from which side; the message only says what happened.
    over.message = `The applied DP went past the target of point ${current.index + 1} on the approach.`;
    const side = current.approach === 'up' ? 'below' : 'above';
    const past = current.approach === 'up' ? current.targetDp - 3 * current.window : current.targetDp + 3 * current.window;
    over.action = (
      <>
        Re-approach from {side}: go back to about <span className="num">{formatNumber(past, dpDecimals)}</span> {unitLabel}, then {current.approach === 'up' ? 'raise' : 'lower'} the
        pressure slowly to the target without passing it.
      </>
    );
  }
  for (const d of ['pressure', 'current'] as const) {
    const link = devices[d];
    if (link && !link.connected && !out.has('disconnect'))
      out.set('disconnect', { kind: 'disconnect', message: `${d === 'pressure' ? 'Pressure calibrator' : 'Current meter'} on ${link.path ?? 'its port'}: ${link.reason ?? 'connection lost'}. The hold restarts when it is back.` });
  }
  const ne = ne43Problem(values.ne43);
  if (ne && !out.has('ne43')) out.set('ne43', { kind: 'ne43', message: ne });
  if (values.unitProblem) out.set('unit', { kind: 'unit', message: values.unitProblem });
  if (streamStatus === 'reconnecting') out.set('stream', { kind: 'stream', message: 'The live connection to the bench dropped; reconnecting and catching up. Captures continue on the server.' });
  const order: BannerItem['kind'][] = ['overrange', 'disconnect', 'leak', 'overshoot', 'ne43', 'unstable', 'clock', 'unit', 'stream'];
  return order.flatMap((k) => (out.has(k) ? [out.get(k)!] : []));
}
