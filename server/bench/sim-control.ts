/**
 * The simulated rig's control surface (`/api/sim`, BENCH=sim only): transmitter errors, noise,
 * leak, overshoot, faults, and the autopilot tied to the local bench's current run. Built by the
 * composition root over the rig it created; the run's transfer data comes from a function it is
 * given (the run service's), and the autopilot moves on from a point once its capture is stored
 * and published on the hub.
 */
import { convertPressure, isPressureUnitId, type OutputMode } from '../../shared/calc';
import type { AutopilotPlan } from '../../simulators/autopilot';
import type { SimControl, SimRig, SimRigSnapshot } from '../../simulators/sim-rig';
import { conflict, notFound } from '../errors';
import type { BenchHub } from './hub';

/** Transfer data a run gives the simulated transmitter when the autopilot drives it. */
export interface SimRunContext {
  /** The run (the autopilot follows its `run.changed` events). Optional for older callers. */
  runId?: string;
  /** The point the run is on now, or null when none. Default: the first. */
  currentIndex?: number | null;
  unit: string;
  lrv: number;
  urv: number;
  outputMode: OutputMode;
  cutoff: { mode: 'none' } | { mode: 'clamp'; flowPct: number } | { mode: 'linear'; breakpointDpPct: number };
  holdSeconds: number;
  /** Each point's target, approach and capture-window half-width (instrument unit). */
  points: { targetDp: number; approach: 'up' | 'down'; window?: number }[];
}

/** Body of `POST /api/sim` once validated (SimControl, with the autopilot tied to the current run). */
export interface SimRequest extends Omit<SimControl, 'autopilot'> {
  autopilot?:
    | 'stop'
    | {
        speed?: number;
        holdSeconds?: number;
        overshoot?: { fraction: number; points?: number[] };
        leak?: { perMin: number; points?: number[] };
        /** Leave the transmitter's range and output mode alone (default: match the run's instrument). */
        keepTransmitter?: boolean;
      };
}

/** What `/api/sim` calls. */
export interface SimController {
  apply(req: SimRequest): SimRigSnapshot;
  snapshot(): SimRigSnapshot;
  /** Stops listening to the hub. */
  close(): void;
}

export interface SimControlOptions {
  /** The rig, or undefined on a server with real instruments (every call is then a 409). */
  rig: SimRig | undefined;
  hub: BenchHub;
  /** The bench the rig is wired to. */
  benchId: string;
  /** The transfer data and plan of the run active on that bench, if any. */
  runContext: () => SimRunContext | undefined;
}

export function createSimControl(o: SimControlOptions): SimController {
  const { rig } = o;
  const need = (): SimRig => {
    if (!rig) throw conflict('The simulated rig is not running: this server uses real instruments (BENCH=serial)');
    return rig;
  };
  /** The run the autopilot was started for. */
  let following: string | undefined;
  // The autopilot leaves a point once the capture is stored: point.captured reaches the hub only then.
  const unsubscribe = rig
    ? o.hub.subscribe('sim-autopilot', (batch) => {
        for (const e of batch) {
          if (e.kind !== 'message') continue;
          const m = e.message;
          if (m.type === 'point.captured' && m.benchId === o.benchId) rig.releaseAutopilotPoint(m.index);
          // The run moved to another point (next, redo) or ended: the autopilot follows it.
          if (m.type === 'run.changed' && following === m.runId) rig.followAutopilotPoint(m.status === 'running' || m.status === 'paused' ? m.currentIndex : null);
        }
      })
    : () => {};

  return {
    apply(req: SimRequest) {
      const rig = need();
      const { autopilot, ...rest } = req;
      const control: SimControl = { ...rest };
      if (autopilot === 'stop') {
        control.autopilot = 'stop';
        following = undefined;
      }
      else if (autopilot) {
        const ctx = o.runContext();
        if (!ctx) throw notFound('No run is active on the bench: start a run before the autopilot');
        const toRig = (v: number) => (ctx.unit !== rig.unit && isPressureUnitId(ctx.unit) && isPressureUnitId(rig.unit) ? convertPressure(v, ctx.unit, rig.unit) : v);
        if (!autopilot.keepTransmitter) {
          control.transmitter = {
            lrv: toRig(ctx.lrv),
            urv: toRig(ctx.urv),
            outputMode: ctx.outputMode,
            cutoff: ctx.cutoff.mode === 'linear' ? { mode: 'linear-below', breakpointDpPct: ctx.cutoff.breakpointDpPct } : ctx.cutoff,
            ...req.transmitter,
          };
        }
        const speed = autopilot.speed ?? 1;
        // The autopilot moves on when the engine captures the point; this is only the longest it waits
        // (in real time: the engine's hold is not sped up), so a point that cannot be captured is left.
        const dwellS = autopilot.holdSeconds ?? ctx.holdSeconds * 4 + 10;
        const plan: AutopilotPlan = {
          points: ctx.points.map((p) => ({
            targetDp: toRig(p.targetDp),
            direction: p.approach,
            ...(p.window !== undefined ? { window: Math.abs(toRig(p.targetDp + p.window) - toRig(p.targetDp)) } : {}),
          })),
          // Start where the run is, not at point 1.
          startIndex: ctx.currentIndex ?? 0,
          holdSeconds: dwellS * speed,
          speed,
          ...(autopilot.overshoot ? { overshoot: autopilot.overshoot } : {}),
          ...(autopilot.leak ? { leak: { perMin: toRig(autopilot.leak.perMin), points: autopilot.leak.points } } : {}),
        };
        control.autopilot = plan;
        following = ctx.runId;
      }
      if (req.setpoint) following = undefined; // a manual setpoint stops the autopilot
      return rig.apply(control);
    },
    snapshot() {
      return need().snapshot();
    },
    close() {
      unsubscribe();
    },
  };
}
