/**
 * A careful technician at the pump, as a pure state machine: for each point it comes from the
 * correct side (below on the way up, above on the way down), lets the source settle, dwells for the
 * hold time, then moves on. It follows the run: started mid-run it begins at the run's current
 * point, and when the run moves to another point (a redo, a skip) it goes there
 * ({@link followPoint}). After an overshoot past the point's window it backs off and approaches
 * again, gently. Its index never passes the plan's last point.
 */
import type { SourceState } from './rig-model';

/** One test point for the autopilot. */
export interface AutopilotPoint {
  /** Applied DP to reach, rig unit. */
  targetDp: number;
  /** Direction of travel: approach from below (`up`) or from above (`down`). */
  direction: 'up' | 'down';
  /**
   * Half-width of the point's capture window, rig unit: passing the target by more than this on
   * the approach is an overshoot, and the autopilot approaches again. Default: a sixth of the margin.
   */
  window?: number;
}

/** What the autopilot should do. */
export interface AutopilotPlan {
  points: AutopilotPoint[];
  /** Dwell at each point once settled, s (before the speed factor). Default 30 s. */
  holdSeconds?: number;
  /** Speed factor: dwell and the source's time constant are divided by it. Default 1. */
  speed?: number;
  /** How far past the point to pre-position before approaching, rig unit. Default 3 % of the largest |target|, at least 0.1. */
  approachMargin?: number;
  /** Deliberate overshoot on the approach, fraction of the step (0.2 = 20 %). Default none. */
  overshoot?: { fraction: number; points?: number[] };
  /** Leak injected while dwelling, rig unit per minute. Default none. */
  leak?: { perMin: number; points?: number[] };
  /** Point to begin at (the run's current point). Default 0. */
  startIndex?: number;
}

/** Phase of the autopilot at the current point. */
export type AutopilotPhase = 'pre-position' | 'approach' | 'dwell' | 'done';

/** Where the autopilot is. */
export interface AutopilotState {
  index: number;
  phase: AutopilotPhase;
  /** Model time the current phase started, s. */
  phaseStartS: number;
  /** Setpoint last requested, rig unit; `undefined` before the first request. */
  requested: number | undefined;
  /** Index of a point the bench has captured: the dwell there ends at once (see {@link releasePoint}). */
  released?: number;
  /** Index of the point being approached again after an overshoot (no deliberate overshoot then). */
  reapproach?: number;
  /** The approach went past the window: the autopilot backs off once the pump has settled. */
  overshot?: boolean;
}

/** What the rig should do after a step. */
export interface AutopilotCommand {
  setpoint?: { value: number; overshoot: number };
  /** Leak rate to apply from now, rig unit per minute. */
  leakPerMin: number;
}

/**
 * Starting state, at point `index` (the run's current point; default the first). An index past the
 * plan's end starts done at the last point.
 */
export function startAutopilot(nowS: number, index = 0, points = Infinity): AutopilotState {
  if (index >= points) return { index: Math.max(0, points - 1), phase: 'done', phaseStartS: nowS, requested: undefined };
  return { index: Math.max(0, index), phase: 'pre-position', phaseStartS: nowS, requested: undefined };
}

/**
 * The run is now at point `index` (or finished: null). A different point is approached afresh
 * from its correct side; the same point keeps its progress; null ends the autopilot.
 */
export function followPoint(plan: AutopilotPlan, state: AutopilotState, index: number | null, nowS: number): AutopilotState {
  if (index === null || index >= plan.points.length) return { ...state, index: Math.min(state.index, Math.max(0, plan.points.length - 1)), phase: 'done' };
  if (index === state.index && state.phase !== 'done') return state;
  const { released: _released, reapproach: _reapproach, ...rest } = state;
  return { ...rest, index: Math.max(0, index), phase: 'pre-position', phaseStartS: nowS, requested: undefined };
}

function applies(list: number[] | undefined, index: number): boolean {
  return list === undefined || list.includes(index);
}

/** Margin used when the plan gives none. */
export function defaultMargin(plan: AutopilotPlan): number {
  return Math.max(0.1, 0.03 * Math.max(...plan.points.map((p) => Math.abs(p.targetDp)), 0));
}

/**
 * Advances the autopilot to `nowS` given the source as it is now. Returns the new state and, when
 * something changes, the setpoint to request and the leak to apply.
 */
export function stepAutopilot(
  plan: AutopilotPlan,
  state: AutopilotState,
  source: SourceState,
  nowS: number,
): { state: AutopilotState; command: AutopilotCommand | undefined } {
  const point = plan.points[state.index];
  if (state.phase === 'done' || !point) return { state: { ...state, phase: 'done' }, command: undefined };
  const speed = plan.speed ?? 1;
  const margin = plan.approachMargin ?? defaultMargin(plan);
  const settled = source.phase === 'isolated';
  const below = point.direction === 'up';

  switch (state.phase) {
    case 'pre-position': {
      const onCorrectSide = below ? source.pressure <= point.targetDp - margin / 2 : source.pressure >= point.targetDp + margin / 2;
      if (onCorrectSide && (settled || state.requested === undefined)) {
        return approach(plan, state, point, nowS);
      }
      // Going up to a point at or above zero DP, start no lower than zero (vented), as at the bench.
      const start = below ? (point.targetDp >= 0 ? Math.max(0, point.targetDp - margin) : point.targetDp - margin) : point.targetDp + margin;
      if (state.requested !== start) {
        return { state: { ...state, requested: start }, command: { setpoint: { value: start, overshoot: 0 }, leakPerMin: 0 } };
      }
      if (settled) return approach(plan, state, point, nowS);
      return { state, command: undefined };
    }
    case 'approach': {
      // Past the window on the way in: like a technician who sees it on the screen, let the pump
      // settle, then back off to the correct side and come again, gently. (Reacting within one model
      // step would make the excursion shorter than a reading interval, unseen by the bench.)
      const past = point.window ?? margin / 6;
      const pastNow = below ? source.pressure > point.targetDp + past : source.pressure < point.targetDp - past;
      if (pastNow && !state.overshot) return { state: { ...state, overshot: true }, command: undefined };
      if (state.overshot) {
        if (!settled) return { state, command: undefined };
        const start = below ? (point.targetDp >= 0 ? Math.max(0, point.targetDp - margin) : point.targetDp - margin) : point.targetDp + margin;
        return {
          state: { ...state, phase: 'pre-position', phaseStartS: nowS, requested: start, reapproach: state.index, overshot: false },
          command: { setpoint: { value: start, overshoot: 0 }, leakPerMin: 0 },
        };
      }
      if (settled && source.setpoint === point.targetDp) {
        const leak = plan.leak && applies(plan.leak.points, state.index) ? plan.leak.perMin : 0;
        return { state: { ...state, phase: 'dwell', phaseStartS: nowS }, command: { leakPerMin: leak } };
      }
      return { state, command: undefined };
    }
    case 'dwell': {
      // Like a technician watching the screen: move on once the point is captured, or after the longest dwell.
      const captured = state.released === state.index;
      if (!captured && nowS - state.phaseStartS < (plan.holdSeconds ?? 30) / speed) return { state, command: undefined };
      // Never past the plan's end: after the last point it stays there, done.
      if (state.index + 1 >= plan.points.length) return { state: { ...state, phase: 'done', phaseStartS: nowS }, command: { leakPerMin: 0 } };
      return { state: { ...state, index: state.index + 1, phase: 'pre-position', phaseStartS: nowS, requested: undefined }, command: { leakPerMin: 0 } };
    }
  }
}

/** Marks point `index` as captured, so the dwell there ends at the next step. */
export function releasePoint(state: AutopilotState, index: number): AutopilotState {
  return { ...state, released: index };
}

function approach(
  plan: AutopilotPlan,
  state: AutopilotState,
  point: AutopilotPoint,
  nowS: number,
): { state: AutopilotState; command: AutopilotCommand } {
  // A deliberate overshoot is made once per point: the approach after it is careful.
  const overshoot = plan.overshoot && applies(plan.overshoot.points, state.index) && state.reapproach !== state.index ? plan.overshoot.fraction : 0;
  return {
    state: { ...state, phase: 'approach', phaseStartS: nowS, requested: point.targetDp },
    command: { setpoint: { value: point.targetDp, overshoot }, leakPerMin: 0 },
  };
}
