/**
 * Capture engine: the authority on holds and captures for the running run of one bench. Each
 * point goes `waiting → approaching → settling → holding → captured`; flags `leak`, `overshoot`,
 * `unstable`, `manual`. Uses shared/calc's ApproachTracker and HoldAnalyzer (O(1) per sample).
 * It keeps no storage: it raises the capture path's run events (shared/schemas/stream.ts) to its
 * sink; the run service stores them and only then has the hub publish them.
 */
import { EventEmitter } from 'node:events';
import { classifyNe43, HoldAnalyzer, type HoldReason, type PlanPoint } from '../../shared/calc';
import type { PointCapture, PointState } from '../../shared/schemas/runs';
import {
  captureOfHold,
  createActiveRun,
  dropHold,
  EngineRefusal,
  inRunUnit,
  leakLimitPct,
  nextUncaptured,
  restartHoldWindow,
  snapshotOf,
  trackerFor,
  type Active,
  type EngineEvent,
  type EnginePoint,
  type EngineRunSettings,
  type RestoredRun,
  type RunSnapshot,
  type WarningKind,
} from './capture-run';
import { warningText } from './capture-warnings';
import type { HubEntry } from './hub';

export { EngineRefusal, type EngineEvent, type EnginePoint, type EngineRunSettings, type RunSnapshot, type RunStatus, type WarningKind } from './capture-run';

/** The hold reasons that mean the window was not clean (a channel left its stability band). */
const BAND_LOST: ReadonlySet<HoldReason> = new Set(['dp-band', 'ma-band']);

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
  snapshot(): RunSnapshot | undefined {
    return this.run && snapshotOf(this.run);
  }

  /**
   * Starts (or restores) a run. `restore` carries point states already persisted (after a restart);
   * captured points stay captured and the first uncaptured one becomes current.
   */
  start(settings: EngineRunSettings, plan: PlanPoint[], restore?: RestoredRun): void {
    if (this.activeRunId) throw new EngineRefusal(`Another run (${this.activeRunId}) is active on ${this.benchId}`);
    this.run = createActiveRun(settings, plan, restore);
    const next = nextUncaptured(this.run.points, -1);
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
    dropHold(r);
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
        dropHold(r);
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
    dropHold(r);
    r.tracker = trackerFor(p.plan);
    this.setState(r, p, 'approaching');
    if (hadHold) this.warn(r, 'disconnect', warningText.disconnect(device, reason, p.plan.index + 1), null);
  }

  private onPressure(r: Active, tMs: number, wallMs: number, raw: number, unit: string | null): void {
    const p = r.points[r.current!]!;
    const converted = inRunUnit(r.s.unit, raw, unit);
    if (converted === undefined && !r.unitWarned) {
      r.unitWarned = true;
      this.warn(r, 'unstable', warningText.unconvertible(unit!, r.s.unit), null);
    }
    const value = converted ?? raw;
    this.checkOverrange(r, value);
    const before = r.tracker!.status();
    const st = r.tracker!.push(tMs, value);
    if (st.overshoots > before.overshoots) {
      if (!p.flags.includes('overshoot')) p.flags.push('overshoot');
      this.warn(r, 'overshoot', warningText.overshoot(p.plan.index + 1, p.plan.approach), null);
    }
    if (st.state !== 'in-window') {
      if (p.state === 'settling' || p.state === 'holding') dropHold(r);
      this.setState(r, p, 'approaching');
      return;
    }
    if (p.state === 'approaching' || p.state === 'waiting') {
      dropHold(r);
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
      this.warn(r, 'overrange', warningText.overrange(value, limit, r.s.dpSpan, r.s.unit), null);
    } else if (value < limit - 0.02 * r.s.dpSpan) r.overrangeWarned = false; // re-arm once clearly back below (2 % of span; our own choice)
  }

  private onCurrent(r: Active, tMs: number, wallMs: number, value: number): void {
    const p = r.points[r.current!]!;
    const ne = classifyNe43(value);
    if (!ne.isMeasurement) {
      if (!r.ne43Warned) {
        r.ne43Warned = true;
        this.warn(r, 'ne43', warningText.ne43(value, ne.class), null);
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
    const bandLost = enough && h.reasons.some((x) => BAND_LOST.has(x));
    const drifting = enough && h.durationMs >= r.holdSettings.leakMinDurationMs! && (h.leak || !h.stable);
    // Leak or settling: a trend at a near-constant rate over the last three sub-windows, beyond the
    // leak limit, is a leak; a decaying one is relaxation and is left to settle (shared/calc hold.ts).
    const t = r.trend!.trend();
    const leaking = t.kind === 'leak' && Math.abs(t.ratePctSpanPerMin) > leakLimitPct(r);
    if (leaking) {
      if (!p.flags.includes('leak')) p.flags.push('leak');
      if (!r.leakWarned) {
        r.leakWarned = true;
        this.warn(r, 'leak', warningText.leak(p.plan.index + 1, t.ratePctSpanPerMin), t.ratePctSpanPerMin);
      }
    }
    if (h.capturable && !bandLost && !leaking) {
      this.capture(r, false, null, null);
      return;
    }
    if (bandLost || drifting) {
      // The window is not clean: the approach is still settling, or the tubing leaks. The window
      // slides on from here, so the approach before the source was isolated is not held against it.
      restartHoldWindow(r);
      this.setState(r, p, 'settling');
    } else this.setState(r, p, h.stable && !h.leak && !leaking ? 'holding' : 'settling');
    if (r.settlingSinceMs !== undefined && p.state === 'settling' && tMs - r.settlingSinceMs > (r.s.unstableAfterHolds ?? 4) * required && !p.flags.includes('unstable')) {
      p.flags.push('unstable');
      this.warn(r, 'unstable', warningText.unstable(p.plan.index + 1, h.reasons), null);
    }
    if (p.state === 'holding' && tMs - r.lastProgressMs >= (r.s.progressEveryMs ?? 250)) {
      r.lastProgressMs = tMs;
      this.emitPoint(r, p, { elapsedMs: h.durationMs, requiredMs: required });
    }
  }

  private capture(r: Active, manual: boolean, reason: string | null, user: { id: string; email: string } | null): PointCapture {
    const p = r.points[r.current!]!;
    const capture = captureOfHold(r, reason, user);
    if (manual && !p.flags.includes('manual')) p.flags.push('manual');
    p.capture = capture;
    p.state = 'captured';
    // The capture first: it is stored with the state, so nothing says 'captured' before the capture is stored.
    this.emit('event', { type: 'point.captured', runId: r.s.runId, benchId: r.s.benchId, index: p.plan.index, manual, capture, flags: [...p.flags] });
    this.emitPoint(r, p, null);
    const next = nextUncaptured(r.points, r.current!);
    if (next === null) this.finish('complete');
    else {
      this.moveTo(next);
      this.emitRun();
    }
    return capture;
  }

  private moveTo(index: number): void {
    const r = this.run!;
    r.current = index;
    dropHold(r);
    r.tracker = trackerFor(r.points[index]!.plan);
    r.overshoots = 0;
    this.setState(r, r.points[index]!, 'approaching', true);
  }

  private finish(status: 'complete' | 'aborted'): void {
    const r = this.run!;
    r.status = status;
    if (r.current !== null && status === 'aborted') {
      const p = r.points[r.current]!;
      if (p.state !== 'captured') this.setState(r, p, 'waiting');
    }
    r.current = null;
    dropHold(r);
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

