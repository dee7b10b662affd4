/**
 * The capture engine's run: its settings, its points and its state (what a run is, apart from how
 * the engine moves it on), and the capture a hold becomes.
 */
import type { HoldAnalyzer} from '../../shared/calc';
import { ApproachTracker, convertPressure, DEFAULT_HOLD_SETTINGS, isPressureUnitId, type HoldSettings, type PlanPoint, type TypeAOfMean } from '../../shared/calc';
import type { CapturedBy, PointCapture, PointFlag, PointState, SampleSource } from '../../shared/schemas/runs';
import type { RunEvent } from '../../shared/schemas/stream';

/** Run settings frozen at start. */
export interface EngineRunSettings {
  runId: string;
  benchId: string;
  /** Instrument unit (a pressure unit id). */
  unit: string;
  /** |URV − LRV|, instrument unit. */
  dpSpan: number;
  holdSeconds: number;
  /** Extra hold settings (bands, limits); `dpSpan` and `holdTimeMs` come from above. */
  hold?: Omit<HoldSettings, 'dpSpan' | 'holdTimeMs'>;
  /** A point still settling after this many hold times gets the `unstable` flag. Default 4. */
  unstableAfterHolds?: number;
  /** Least interval between hold-progress events, ms. Default 250 ms. */
  progressEveryMs?: number;
  /** The technician who performs the run (named on every hands-free capture); null when unknown. */
  performer?: { id: string; email: string } | null;
  /**
   * Applied DP, instrument unit, above which the run warns `overrange` (the URV plus the site's
   * margin); no over-range warning when absent.
   */
  overrangeAbove?: number;
}

/** A point as the engine sees it. */
export interface EnginePoint {
  plan: PlanPoint;
  state: PointState;
  flags: PointFlag[];
  capture: PointCapture | null;
  warning: string | null;
}

export type WarningKind = 'leak' | 'overshoot' | 'unstable' | 'disconnect' | 'ne43' | 'clock' | 'overrange';
export type RunStatus = 'running' | 'paused' | 'complete' | 'aborted';

/** Events of the engine: the run events of the capture path's event map, exactly as they are stored and sent. */
export type EngineEvent = RunEvent;

/** Why an engine command was refused. */
export class EngineRefusal extends Error {
  constructor(
    message: string,
    readonly status: 404 | 409 = 409,
  ) {
    super(message);
    this.name = 'EngineRefusal';
  }
}

/** The engine's state of its active run. */
export interface Active {
  s: EngineRunSettings;
  points: EnginePoint[];
  status: RunStatus;
  current: number | null;
  tracker: ApproachTracker | undefined;
  hold: HoldAnalyzer | undefined;
  holdSettings: HoldSettings;
  holdStartWall: number | undefined;
  holdEndWall: number | undefined;
  settlingSinceMs: number | undefined;
  lastProgressMs: number;
  overshoots: number;
  leakWarned: boolean;
  /**
   * Leak versus relaxation: the applied DP since the point entered its window, in sub-windows of
   * `subWindowMs` (shared/calc `HoldAnalyzer.trend`). Unlike the hold window, it is not restarted
   * when the hold is (drift restarts the hold; a leak must be told from settling over a longer time).
   */
  trend: HoldAnalyzer | undefined;
  subWindowMs: number;
  ne43Warned: boolean;
  unitWarned: boolean;
  /** Over the over-range limit since the last warning (warned once per excursion). */
  overrangeWarned?: boolean;
  lastMa: number | undefined;
  /** Source of the latest sample of each device taken into the hold. */
  sources: { pressure: SampleSource | null; current: SampleSource | null };
  /** Where the hold's readings came from (`kind:id` of each sample source), named by an automatic capture. */
  holdSources: Set<string>;
}

/**
 * Sub-window of the leak-versus-relaxation test: a third of the hold time, at most the shared/calc
 * default (10 s), so that the three sub-windows the verdict needs fit in one hold (product choice).
 * With the default 30 s hold that is 10 s, and relaxation with τ up to about 9 sub-windows (90 s)
 * decays visibly across them; a shorter hold tells a leak from settling only for shorter τ.
 */
function subWindowMsFor(holdTimeMs: number, configured: number | undefined): number {
  return configured ?? Math.max(100, Math.min(DEFAULT_HOLD_SETTINGS.trendWindowMs, holdTimeMs / 3));
}

/** Point states persisted before a restart, restored into a new run. */
export interface RestoredRun {
  status: 'running' | 'paused';
  points: { state: PointState; flags: PointFlag[]; capture: PointCapture | null }[];
}

/** A new run's state: restored points stay captured; nothing is current until the engine moves on. */
export function createActiveRun(settings: EngineRunSettings, plan: PlanPoint[], restore?: RestoredRun): Active {
  const holdSettings: HoldSettings = {
    ...settings.hold,
    dpSpan: settings.dpSpan,
    holdTimeMs: settings.holdSeconds * 1000,
    // A leak must be called within a hold, also when the hold is short.
    leakMinDurationMs: Math.min(settings.hold?.leakMinDurationMs ?? 5000, settings.holdSeconds * 1000),
  };
  const points: EnginePoint[] = plan.map((p, i) => {
    const r = restore?.points[i];
    const captured = r?.state === 'captured' && r.capture;
    return { plan: p, state: captured ? 'captured' : 'waiting', flags: r ? [...r.flags] : [], capture: captured ? r.capture : null, warning: null };
  });
  return {
    s: settings,
    points,
    status: restore?.status ?? 'running',
    current: null,
    tracker: undefined,
    hold: undefined,
    holdSettings,
    holdStartWall: undefined,
    holdEndWall: undefined,
    settlingSinceMs: undefined,
    lastProgressMs: 0,
    overshoots: 0,
    leakWarned: false,
    trend: undefined,
    subWindowMs: subWindowMsFor(holdSettings.holdTimeMs!, settings.hold?.trendWindowMs),
    ne43Warned: false,
    unitWarned: false,
    lastMa: undefined,
    sources: { pressure: null, current: null },
    holdSources: new Set(),
  };
}

/** The run's points and state as the engine reports them (copies). */
export interface RunSnapshot {
  runId: string;
  status: RunStatus;
  currentIndex: number | null;
  points: EnginePoint[];
  /** Leak versus relaxation of the current point so far (null outside its window). */
  trend: PointCapture['trend'];
}

export function snapshotOf(r: Active): RunSnapshot {
  return {
    runId: r.s.runId,
    status: r.status,
    currentIndex: r.current,
    points: r.points.map((p) => ({ ...p, flags: [...p.flags], capture: p.capture ? { ...p.capture } : null })),
    trend: trendOfCapture(r.trend, r.subWindowMs),
  };
}

/** The next point after `after` (wrapping round) that is not captured; null when all are. */
export function nextUncaptured(points: readonly EnginePoint[], after: number): number | null {
  for (let k = 1; k <= points.length; k++) {
    const i = (after + k + points.length) % points.length;
    if (points[i]!.state !== 'captured') return i;
  }
  return null;
}

/** Starts a new hold window from the next sample (the leak-versus-relaxation record goes on). */
export function restartHoldWindow(r: Active): void {
  r.hold!.reset();
  r.holdStartWall = r.holdEndWall = undefined;
  r.holdSources.clear();
}

/** Drops the hold and its leak record (the point left its window, the run paused, a device dropped). */
export function dropHold(r: Active): void {
  r.hold = undefined;
  r.holdStartWall = r.holdEndWall = undefined;
  r.holdSources.clear();
  r.settlingSinceMs = undefined;
  r.leakWarned = false;
  r.trend = undefined;
}

/**
 * A calibrator reading in the run's unit: as read when no unit is given or it is the run's own,
 * converted between pressure units, and undefined when it cannot be converted.
 */
export function inRunUnit(runUnit: string, value: number, unit: string | null): number | undefined {
  if (!unit || unit === runUnit) return value;
  if (isPressureUnitId(unit) && isPressureUnitId(runUnit)) return convertPressure(value, unit, runUnit);
  return undefined;
}

/** The approach tracker of a plan point. */
export function trackerFor(p: PlanPoint): ApproachTracker {
  return new ApproachTracker({ target: p.targetDp, window: p.window, direction: p.approach });
}

/** Leak limit in % of span per minute, from the run's hold settings (default of shared/calc). */
export function leakLimitPct(r: Active): number {
  const hs = r.holdSettings;
  return hs.leakLimitUnitPerMin !== undefined ? (hs.leakLimitUnitPerMin / r.s.dpSpan) * 100 : (hs.leakLimitPctSpanPerMin ?? DEFAULT_HOLD_SETTINGS.leakLimitPctSpanPerMin);
}

/**
 * The capture of the current hold: its means, spreads, Type A and leak verdict, and who or what
 * took it (`user` for a manual capture, otherwise the bench with its sources and the performer).
 */
export function captureOfHold(r: Active, reason: string | null, user: { id: string; email: string } | null): PointCapture {
  const h = r.hold!.result();
  const by: CapturedBy = user
    ? { kind: 'user', benchId: r.s.benchId, user: { id: user.id, email: user.email } }
    : { kind: 'bench', benchId: r.s.benchId, sources: { ...r.sources }, performer: r.s.performer ?? null };
  return {
    appliedDp: h.dp.mean,
    appliedDpSd: h.dp.sd,
    measuredMa: h.ma.mean,
    measuredMaSd: h.ma.sd,
    n: Math.min(h.dp.n, h.ma.n),
    startMs: r.holdStartWall ?? 0,
    endMs: r.holdEndWall ?? 0,
    leakRatePctSpanPerMin: Number.isFinite(h.leakRatePctSpanPerMin) ? h.leakRatePctSpanPerMin : null,
    manualReason: reason,
    capturedBy: user?.email ?? null,
    by,
    typeA: typeAOfCapture(r.hold!.typeA()),
    // What fed the hold (a manual capture also names its person in capturedBy).
    capturedFrom: [...r.holdSources].sort().join(', ') || null,
    trend: trendOfCapture(r.trend, r.subWindowMs),
  };
}

/** The hold's Type A of the mean error as the capture stores it (mA). */
function typeAOfCapture(a: TypeAOfMean | undefined): PointCapture['typeA'] {
  return a ? { uMa: a.u, sdMa: a.sd, n: a.n, nEff: a.nEff, dof: a.dof, method: a.method } : null;
}

/** The leak-versus-relaxation verdict as the capture stores it (% of span per minute). */
export function trendOfCapture(a: HoldAnalyzer | undefined, subWindowMs: number): PointCapture['trend'] {
  if (!a) return null;
  const t = a.trend();
  return { kind: t.kind, ratePctSpanPerMin: t.ratePctSpanPerMin, decayRatio: t.decayRatio, windows: t.windows, subWindowMs };
}
