/**
 * Capture engine: the authority on holds and captures for the running run of one bench. Each
 * point goes `waiting → approaching → settling → holding → captured`; flags `leak`, `overshoot`,
 * `unstable`, `manual`. Uses shared/calc's ApproachTracker and HoldAnalyzer (O(1) per sample).
 * It keeps no storage: it raises the capture path's run events (shared/schemas/stream.ts) to its
 * sink; the run service stores them and only then has the hub publish them.
 */
import { EventEmitter } from 'node:events';
import {
  ApproachTracker,
  classifyNe43,
  convertPressure,
  DEFAULT_HOLD_SETTINGS,
  HoldAnalyzer,
  isPressureUnitId,
  type HoldSettings,
  type PlanPoint,
  type TypeAOfMean,
} from '../../shared/calc';
import type { CapturedBy, PointCapture, PointFlag, PointState, SampleSource } from '../../shared/schemas/runs';
import type { RunEvent } from '../../shared/schemas/stream';
import type { BenchHub, HubEntry } from './hub';
import { dpDecimals, formatFixed, unitLabel } from '../../shared/format';

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

interface Active {
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

const BAND_REASONS = ['applied DP outside the stability band', 'current outside the stability band'];

/**
 * Sub-window of the leak-versus-relaxation test: a third of the hold time, at most the shared/calc
 * default (10 s), so that the three sub-windows the verdict needs fit in one hold (product choice).
 * With the default 30 s hold that is 10 s, and relaxation with τ up to about 9 sub-windows (90 s)
 * decays visibly across them; a shorter hold tells a leak from settling only for shorter τ.
 */
function subWindowMsFor(holdTimeMs: number, configured: number | undefined): number {
  return configured ?? Math.max(100, Math.min(DEFAULT_HOLD_SETTINGS.trendWindowMs, holdTimeMs / 3));
}

export class CaptureEngine extends EventEmitter<{ event: [EngineEvent] }> {
  readonly benchId: string;
  private run: Active | undefined;
  /** Source (`kind:id`) of the sample being handled. */
  private source = '';

  constructor(benchId: string) {
    super();
    this.benchId = benchId;
  }

  /** Id of the run on this bench that is running or paused, if any. */
  get activeRunId(): string | null {
    return this.run && (this.run.status === 'running' || this.run.status === 'paused') ? this.run.s.runId : null;
  }

  /** Snapshot of the active run's points (copies). */
  snapshot(): { runId: string; status: RunStatus; currentIndex: number | null; points: EnginePoint[]; trend: PointCapture['trend'] } | undefined {
    const r = this.run;
    if (!r) return undefined;
    return {
      runId: r.s.runId,
      status: r.status,
      currentIndex: r.current,
      points: r.points.map((p) => ({ ...p, flags: [...p.flags], capture: p.capture ? { ...p.capture } : null })),
      // Leak versus relaxation of the current point so far (null outside its window).
      trend: trendOfCapture(r.trend, r.subWindowMs),
    };
  }

  /**
   * Starts (or restores) a run. `restore` carries point states already persisted (after a restart);
   * captured points stay captured and the first uncaptured one becomes current.
   */
  start(settings: EngineRunSettings, plan: PlanPoint[], restore?: { status: 'running' | 'paused'; points: { state: PointState; flags: PointFlag[]; capture: PointCapture | null }[] }): void {
    if (this.activeRunId) throw new EngineRefusal(`Another run (${this.activeRunId}) is active on ${this.benchId}`);
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
    this.run = {
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
    const next = this.nextUncaptured(-1);
    if (next === null) this.finish('complete');
    else {
      this.moveTo(next);
      this.emitRun();
    }
  }

  /** Drops the run without events (service shutdown). */
  unload(): void {
    this.run = undefined;
  }

  pause(): void {
    const r = this.need();
    if (r.status !== 'running') throw new EngineRefusal(`The run is ${r.status}, not running`);
    r.status = 'paused';
    this.invalidateHold(r);
    if (r.current !== null) this.setState(r, r.points[r.current]!, 'approaching');
    this.emitRun();
  }

  resume(): void {
    const r = this.need();
    if (r.status !== 'paused') throw new EngineRefusal(`The run is ${r.status}, not paused`);
    r.status = 'running';
    if (r.current !== null) this.moveTo(r.current);
    this.emitRun();
  }

  abort(): void {
    const r = this.need();
    if (r.status !== 'running' && r.status !== 'paused') throw new EngineRefusal(`The run is already ${r.status}`);
    this.finish('aborted');
  }

  /** Manual capture of the current point with the hold means so far (flag `manual`), by `user`. */
  manualCapture(index: number, reason: string, user: { id: string; email: string }): PointCapture {
    const r = this.need();
    if (r.status !== 'running' && r.status !== 'paused') throw new EngineRefusal(`The run is ${r.status}`);
    if (r.current !== index) throw new EngineRefusal(`Point ${index} is not the current point (${r.current ?? 'none'})`);
    const h = r.hold?.result();
    if (!h || h.dp.n < 2 || h.ma.n < 2) throw new EngineRefusal('No hold readings yet: bring the applied DP into the window first');
    return this.capture(r, true, reason, user);
  }

  /** Clears a point's capture and flags and makes it the current point. */
  redo(index: number): void {
    const r = this.need();
    if (r.status !== 'running' && r.status !== 'paused' && r.status !== 'complete') throw new EngineRefusal(`The run is ${r.status}`);
    const p = r.points[index];
    if (!p) throw new EngineRefusal(`No point ${index}`, 404);
    p.capture = null;
    p.flags = [];
    p.warning = null;
    if (r.status === 'complete') r.status = 'running';
    if (r.current !== null && r.current !== index) this.setState(r, r.points[r.current]!, 'waiting');
    this.moveTo(index);
    this.emitRun();
  }

  /** A warning about the bench from outside its samples (a forwarding sender's implausible clock); none without an active run. */
  warnExternal(kind: 'clock', message: string): void {
    const r = this.run;
    if (!r || (r.status !== 'running' && r.status !== 'paused')) return;
    this.warn(r, kind, message, null);
  }

  /** Hub consumer. */
  readonly consume = (batch: HubEntry[]): void => {
    for (const e of batch) this.onEntry(e);
  };

  private onEntry(e: HubEntry): void {
    const r = this.run;
    if (!r || r.status !== 'running' || r.current === null) return;
    if (e.kind === 'message') {
      const m = e.message;
      if (m.type === 'device.disconnected' && m.benchId === r.s.benchId) this.onDisconnect(r, m.device, m.reason);
      return;
    }
    if (e.benchId !== r.s.benchId) return;
    if (e.backlog) {
      // A line held by its sender through a dropped link is not live: the hold cannot count it, nor span the gap it fills.
      const p = r.points[r.current]!;
      if (p.state === 'settling' || p.state === 'holding') {
        this.invalidateHold(r);
        this.setState(r, p, 'approaching');
      }
      return;
    }
    if (e.value === null) return;
    r.sources[e.device] = e.source ?? null;
    // Entries built without a source (older fixtures) count as the bench's own port.
    const src = (e as { source?: { kind: string; id: string } }).source;
    this.source = src ? `${src.kind}:${src.id}` : `port:${e.benchId}`;
    if (e.device === 'pressure') this.onPressure(r, e.tMs, e.wallMs, e.value, e.unit);
    else this.onCurrent(r, e.tMs, e.wallMs, e.value);
  }

  private onDisconnect(r: Active, device: string, reason: string): void {
    const p = r.points[r.current!]!;
    const hadHold = p.state === 'holding' || p.state === 'settling';
    this.invalidateHold(r);
    r.tracker = this.newTracker(p.plan);
    this.setState(r, p, 'approaching');
    if (hadHold) {
      this.warn(r, 'disconnect', `The ${device === 'pressure' ? 'pressure calibrator' : 'current meter'} disconnected (${reason}); the hold at point ${p.plan.index + 1} was discarded and restarts when it is back`, null);
    }
  }

  private toRunUnit(r: Active, value: number, unit: string | null): number {
    if (!unit || unit === r.s.unit) return value;
    if (isPressureUnitId(unit) && isPressureUnitId(r.s.unit)) return convertPressure(value, unit, r.s.unit);
    if (!r.unitWarned) {
      r.unitWarned = true;
      this.warn(r, 'unstable', `The calibrator reads in ${unitLabel(unit)}, which cannot be converted to ${unitLabel(r.s.unit)}`, null);
    }
    return value;
  }

  private onPressure(r: Active, tMs: number, wallMs: number, raw: number, unit: string | null): void {
    const p = r.points[r.current!]!;
    const value = this.toRunUnit(r, raw, unit);
    this.checkOverrange(r, value);
    const before = r.tracker!.status();
    const st = r.tracker!.push(tMs, value);
    if (st.overshoots > before.overshoots) {
      if (!p.flags.includes('overshoot')) p.flags.push('overshoot');
      // No numbers here: the capture screen states the one back-off target, in the unit as the screen writes it.
      const side = p.plan.approach === 'up' ? 'below' : 'above';
      this.warn(r, 'overshoot', `Overshoot at point ${p.plan.index + 1}: the applied DP went past the capture window; approach the target again from ${side}`, null);
    }
    if (st.state !== 'in-window') {
      if (p.state === 'settling' || p.state === 'holding') this.invalidateHold(r);
      this.setState(r, p, 'approaching');
      return;
    }
    if (p.state === 'approaching' || p.state === 'waiting') {
      this.invalidateHold(r);
      r.hold = new HoldAnalyzer({ ...r.holdSettings, maPerDpUnit: p.plan.maPerDpUnit });
      r.trend = new HoldAnalyzer({ ...r.holdSettings, trendWindowMs: r.subWindowMs });
      r.settlingSinceMs = tMs;
      this.setState(r, p, 'settling');
    }
    this.mark(r, wallMs);
    r.hold!.pushDp(tMs, value);
    r.trend!.pushDp(tMs, value);
    this.evaluate(r, tMs);
  }

  /** Warns once per excursion when the applied DP goes past the URV by more than the site's margin. */
  private checkOverrange(r: Active, value: number): void {
    const limit = r.s.overrangeAbove;
    if (limit === undefined) return;
    if (value > limit) {
      if (r.overrangeWarned) return;
      r.overrangeWarned = true;
      this.warn(r, 'overrange', `The applied pressure ${formatFixed(value, dpDecimals(r.s.dpSpan))} ${unitLabel(r.s.unit)} is past the over-range limit of ${formatFixed(limit, dpDecimals(r.s.dpSpan))} ${unitLabel(r.s.unit)}: release pressure now to protect the transmitter`, null);
    } else if (value < limit - 0.02 * r.s.dpSpan) r.overrangeWarned = false; // re-arm once clearly back below (2 % of span; our own choice)
  }

  private onCurrent(r: Active, tMs: number, wallMs: number, value: number): void {
    const p = r.points[r.current!]!;
    const ne = classifyNe43(value);
    if (!ne.isMeasurement) {
      if (!r.ne43Warned) {
        r.ne43Warned = true;
        this.warn(r, 'ne43', `Loop current ${value.toFixed(3)} mA is outside the NE 43 measurement range (3.8–20.5 mA): ${ne.class}`, null);
      }
    } else r.ne43Warned = false;
    r.lastMa = value;
    if (!r.hold || (p.state !== 'settling' && p.state !== 'holding')) return;
    this.mark(r, wallMs);
    r.hold.pushMa(tMs, value);
    this.evaluate(r, tMs);
  }

  private mark(r: Active, wallMs: number): void {
    r.holdSources.add(this.source);
    if (r.holdStartWall === undefined) r.holdStartWall = wallMs;
    r.holdEndWall = wallMs;
  }

  private evaluate(r: Active, tMs: number): void {
    const p = r.points[r.current!]!;
    const h = r.hold!.result();
    const required = r.holdSettings.holdTimeMs!;
    const enough = h.dp.n >= 5 && h.ma.n >= 5;
    const bandLost = enough && h.reasons.some((x) => BAND_REASONS.includes(x));
    const drifting = enough && h.durationMs >= r.holdSettings.leakMinDurationMs! && (h.leak || !h.stable);
    // Leak or settling: a trend at a near-constant rate over the last three sub-windows, beyond the
    // leak limit, is a leak; a decaying one is relaxation and is left to settle (shared/calc hold.ts).
    const t = r.trend!.trend();
    const leaking = t.kind === 'leak' && Math.abs(t.ratePctSpanPerMin) > this.leakLimitPct(r);
    if (leaking) {
      if (!p.flags.includes('leak')) p.flags.push('leak');
      if (!r.leakWarned) {
        r.leakWarned = true;
        this.warn(
          r,
          'leak',
          `Leak at point ${p.plan.index + 1}: the applied DP moves ${Math.abs(t.ratePctSpanPerMin).toFixed(3)} % of span per minute with the source isolated; auto-capture waits until the hold is leak-free`,
          t.ratePctSpanPerMin,
        );
      }
    }
    if (h.capturable && !bandLost && !leaking) {
      this.capture(r, false, null, null);
      return;
    }
    if (bandLost || drifting) {
      // The window is not clean: the approach is still settling, or the tubing leaks. The window
      // slides on from here, so the approach before the source was isolated is not held against it.
      this.restartWindow(r);
      this.setState(r, p, 'settling');
    } else this.setState(r, p, h.stable && !h.leak && !leaking ? 'holding' : 'settling');
    if (r.settlingSinceMs !== undefined && p.state === 'settling' && tMs - r.settlingSinceMs > (r.s.unstableAfterHolds ?? 4) * required && !p.flags.includes('unstable')) {
      p.flags.push('unstable');
      this.warn(r, 'unstable', `Point ${p.plan.index + 1} has not settled: ${h.reasons.filter((x) => x !== 'hold time not reached').join(', ') || 'readings keep moving'}`, null);
    }
    if (p.state === 'holding' && tMs - r.lastProgressMs >= (r.s.progressEveryMs ?? 250)) {
      r.lastProgressMs = tMs;
      this.emitPoint(r, p, { elapsedMs: h.durationMs, requiredMs: required });
    }
  }

  private capture(r: Active, manual: boolean, reason: string | null, user: { id: string; email: string } | null): PointCapture {
    const p = r.points[r.current!]!;
    const h = r.hold!.result();
    const by: CapturedBy = user
      ? { kind: 'user', benchId: r.s.benchId, user: { id: user.id, email: user.email } }
      : { kind: 'bench', benchId: r.s.benchId, sources: { ...r.sources }, performer: r.s.performer ?? null };
    const capture: PointCapture = {
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
    if (manual && !p.flags.includes('manual')) p.flags.push('manual');
    p.capture = capture;
    p.state = 'captured';
    // The capture first: it is stored with the state, so nothing says 'captured' before the capture is stored.
    this.emit('event', { type: 'point.captured', runId: r.s.runId, benchId: r.s.benchId, index: p.plan.index, manual, capture, flags: [...p.flags] });
    this.emitPoint(r, p, null);
    const next = this.nextUncaptured(r.current!);
    if (next === null) this.finish('complete');
    else {
      this.moveTo(next);
      this.emitRun();
    }
    return capture;
  }

  private nextUncaptured(after: number): number | null {
    const pts = this.run!.points;
    for (let k = 1; k <= pts.length; k++) {
      const i = (after + k + pts.length) % pts.length;
      if (pts[i]!.state !== 'captured') return i;
    }
    return null;
  }

  private moveTo(index: number): void {
    const r = this.run!;
    r.current = index;
    this.invalidateHold(r);
    r.tracker = this.newTracker(r.points[index]!.plan);
    r.overshoots = 0;
    this.setState(r, r.points[index]!, 'approaching', true);
  }

  private newTracker(p: PlanPoint): ApproachTracker {
    return new ApproachTracker({ target: p.targetDp, window: p.window, direction: p.approach });
  }

  /** Leak limit in % of span per minute, from the run's hold settings (default of shared/calc). */
  private leakLimitPct(r: Active): number {
    const hs = r.holdSettings;
    return hs.leakLimitUnitPerMin !== undefined ? (hs.leakLimitUnitPerMin / r.s.dpSpan) * 100 : (hs.leakLimitPctSpanPerMin ?? DEFAULT_HOLD_SETTINGS.leakLimitPctSpanPerMin);
  }

  /** Starts a new hold window from the next sample (the leak-versus-relaxation record goes on). */
  private restartWindow(r: Active): void {
    r.hold!.reset();
    r.holdStartWall = r.holdEndWall = undefined;
    r.holdSources.clear();
  }

  private invalidateHold(r: Active): void {
    r.hold = undefined;
    r.holdStartWall = r.holdEndWall = undefined;
    r.holdSources.clear();
    r.settlingSinceMs = undefined;
    r.leakWarned = false;
    r.trend = undefined;
  }

  private finish(status: 'complete' | 'aborted'): void {
    const r = this.run!;
    r.status = status;
    if (r.current !== null && status === 'aborted') {
      const p = r.points[r.current]!;
      if (p.state !== 'captured') this.setState(r, p, 'waiting');
    }
    r.current = null;
    this.invalidateHold(r);
    this.emitRun();
  }

  private setState(r: Active, p: EnginePoint, state: PointState, force = false): void {
    if (p.state === state && !force) return;
    p.state = state;
    this.emitPoint(r, p, null);
  }

  private warn(r: Active, kind: WarningKind, message: string, rate: number | null): void {
    const index = r.current ?? -1;
    const p = r.points[index];
    // A leaking point never settles: the leak (with its rate) stays the point's headline warning.
    if (p && !(kind === 'unstable' && p.flags.includes('leak'))) p.warning = message;
    this.emit('event', { type: 'run.warned', runId: r.s.runId, index, kind, message, ratePctSpanPerMin: rate });
    if (p) this.emitPoint(r, p, null);
  }

  private emitPoint(r: Active, p: EnginePoint, hold: { elapsedMs: number; requiredMs: number } | null): void {
    this.emit('event', { type: 'point.changed', runId: r.s.runId, index: p.plan.index, state: p.state, flags: [...p.flags], hold, warning: p.warning });
  }

  private emitRun(): void {
    const r = this.run!;
    this.emit('event', { type: 'run.changed', runId: r.s.runId, status: r.status, currentIndex: r.current });
  }

  private need(): Active {
    if (!this.run) throw new EngineRefusal('No run is active on this bench', 404);
    return this.run;
  }
}

/**
 * The capture engines of every bench, each created on first use and fed by the hub. Every run event
 * of an engine goes to `sink` (the run service, which stores it and then has the hub publish it);
 * the hub learns at once which run the bench's new samples belong to.
 */
export class CaptureEngines {
  private readonly engines = new Map<string, CaptureEngine>();

  constructor(
    private readonly hub: BenchHub,
    private readonly sink: (benchId: string, e: RunEvent) => void,
  ) {}

  /** The engine of a bench (created and subscribed to the hub on first use). */
  get(benchId: string): CaptureEngine {
    let e = this.engines.get(benchId);
    if (!e) {
      const engine = new CaptureEngine(benchId);
      engine.on('event', (ev) => {
        if (ev.type === 'run.changed') this.hub.setRun(benchId, ev.status === 'running' || ev.status === 'paused' ? ev.runId : null);
        this.sink(benchId, ev);
      });
      this.hub.subscribe(`capture-engine:${benchId}`, engine.consume);
      this.engines.set(benchId, (e = engine));
    }
    return e;
  }

  has(benchId: string): boolean {
    return this.engines.has(benchId);
  }

  /** The running or paused run on a bench, if any. */
  activeRunId(benchId: string): string | null {
    return this.engines.get(benchId)?.activeRunId ?? null;
  }
}

/** The hold's Type A of the mean error as the capture stores it (mA). */
function typeAOfCapture(a: TypeAOfMean | undefined): PointCapture['typeA'] {
  return a ? { uMa: a.u, sdMa: a.sd, n: a.n, nEff: a.nEff, dof: a.dof, method: a.method } : null;
}

/** The leak-versus-relaxation verdict as the capture stores it (% of span per minute). */
function trendOfCapture(a: HoldAnalyzer | undefined, subWindowMs: number): PointCapture['trend'] {
  if (!a) return null;
  const t = a.trend();
  return { kind: t.kind, ratePctSpanPerMin: t.ratePctSpanPerMin, decayRatio: t.decayRatio, windows: t.windows, subWindowMs };
}
