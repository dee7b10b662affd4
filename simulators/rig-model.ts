/**
 * Physics of the simulated rig, pure: time comes in, nothing here reads a clock. The transfer
 * formulas are written out locally (from REFERENCE.md, "Transfer functions") so the simulator
 * stays independent of `shared/calc`.
 */
import { gaussian, type Rng } from '../shared/random';

// ---------------------------------------------------------------------------------------------
// Pressure source: the technician's hand pump / volume controller plus the tubing.

/** Behaviour of the pressure source. Pressures are in the rig's unit (e.g. inH2O@68F). */
export interface SourceConfig {
  /** Time constant of the first-order approach to the setpoint, s. Default 1.5 s. */
  timeConstantS: number;
  /** Pump and tubing noise on the applied pressure, 1σ, in the rig unit. Default 0. */
  noise: number;
  /** Correlation time of that noise, s. Default 0.3 s. */
  noiseCorrelationS: number;
  /** Overshoot past a new setpoint, as a fraction of the step (0.1 = 10 %). Default 0. */
  overshoot: number;
  /** Leak once the source is isolated, rig unit per minute, towards zero DP. Default 0. */
  leakPerMin: number;
  /** Distance from the setpoint at which the technician isolates the pump, rig unit. Default 0.01. */
  isolateBand: number;
}

/** Defaults of {@link SourceConfig}. */
export const DEFAULT_SOURCE: SourceConfig = {
  timeConstantS: 1.5,
  noise: 0,
  noiseCorrelationS: 0.3,
  overshoot: 0,
  leakPerMin: 0,
  isolateBand: 0.01,
};

/** What the source is doing. */
export type SourcePhase = 'overshooting' | 'driving' | 'isolated';

/** State of the pressure source. */
export interface SourceState {
  /** True applied pressure without noise, rig unit. */
  pressure: number;
  /** Current noise deviation, rig unit. */
  noise: number;
  /** Where the technician wants to be, rig unit. */
  setpoint: number;
  /** Where the pump is heading now (past the setpoint while overshooting), rig unit. */
  heading: number;
  phase: SourcePhase;
}

/** A source at rest at `pressure`. */
export function restingSource(pressure = 0): SourceState {
  return { pressure, noise: 0, setpoint: pressure, heading: pressure, phase: 'isolated' };
}

/**
 * Asks the source for a new setpoint. With `overshoot` > 0 it first heads past the setpoint by
 * that fraction of the step, then comes back.
 */
export function setSetpoint(state: SourceState, setpoint: number, overshoot: number): SourceState {
  const step = setpoint - state.pressure;
  if (overshoot > 0 && step !== 0) {
    return { ...state, setpoint, heading: setpoint + overshoot * step, phase: 'overshooting' };
  }
  return { ...state, setpoint, heading: setpoint, phase: 'driving' };
}

/** Advances the source by `dtS` seconds. */
export function stepSource(state: SourceState, config: SourceConfig, dtS: number, rng: Rng): SourceState {
  if (dtS <= 0) return state;
  let { pressure, phase, heading } = state;
  if (phase === 'isolated') {
    // The leak pulls the trapped pressure towards zero DP; it never crosses zero.
    const drop = (config.leakPerMin / 60) * dtS;
    pressure = Math.sign(pressure) * Math.max(0, Math.abs(pressure) - drop);
  } else {
    pressure = heading + (pressure - heading) * Math.exp(-dtS / Math.max(config.timeConstantS, 1e-6));
    if (Math.abs(pressure - heading) <= config.isolateBand) {
      if (phase === 'overshooting') {
        phase = 'driving';
        heading = state.setpoint;
      } else {
        phase = 'isolated';
      }
    }
  }
  const a = Math.exp(-dtS / Math.max(config.noiseCorrelationS, 1e-6));
  const noise = config.noise > 0 ? state.noise * a + config.noise * Math.sqrt(1 - a * a) * gaussian(rng) : 0;
  return { pressure, noise, setpoint: state.setpoint, heading, phase };
}

/** The pressure the calibrator sees: true pressure plus pump noise. */
export function appliedPressure(state: SourceState): number {
  return state.pressure + state.noise;
}

// ---------------------------------------------------------------------------------------------
// Transmitter under test.

/** Where the square root is taken. */
export type OutputMode = 'linear' | 'sqrt-transmitter' | 'sqrt-host';

/** Low-flow cutoff of a rooted output (REFERENCE.md, "Low-flow cutoff"). */
export type LowFlowCutoff =
  | { mode: 'none' }
  /** Output 4 mA (flow 0) below `flowPct` % flow. */
  | { mode: 'clamp'; flowPct: number }
  /** Linear in DP below `breakpointDpPct` % DP, continuous with the root there. */
  | { mode: 'linear-below'; breakpointDpPct: number };

/** Forced NAMUR NE 43 failure signal. */
export type FailureSignal = 'none' | 'low' | 'high';

/** The simulated transmitter. Errors are in % of span; pressures in the rig unit. */
export interface TransmitterConfig {
  /** Lower range value, rig unit. Default 0. */
  lrv: number;
  /** Upper range value, rig unit. Default 100. */
  urv: number;
  outputMode: OutputMode;
  /** Used only with `sqrt-transmitter`. Default none. */
  cutoff: LowFlowCutoff;
  /** Zero error, % of span, added at every point. Default 0. */
  zeroErrorPct: number;
  /** Span (gain) error, % of span at the URV. Default 0. */
  spanErrorPct: number;
  /** Non-linearity, % of span at mid-range (a parabola through zero and span). Default 0. */
  nonLinearityPct: number;
  /** Hysteresis, % of span between rising and falling readings. Default 0. */
  hysteresisPct: number;
  /** Output noise, 1σ, mA. Default 0. */
  outputNoiseMa: number;
  /** Forced failure signal. Default none. */
  failure: FailureSignal;
  /** Low failure current, mA. Default 3.6 mA (NE 43: ≤ 3.6). */
  lowFailureMa: number;
  /** High failure current, mA. Default 21.0 mA (NE 43: ≥ 21.0). */
  highFailureMa: number;
}

/** Defaults of {@link TransmitterConfig}: an ideal linear 0–100 transmitter. */
export const DEFAULT_TRANSMITTER: TransmitterConfig = {
  lrv: 0,
  urv: 100,
  outputMode: 'linear',
  cutoff: { mode: 'none' },
  zeroErrorPct: 0,
  spanErrorPct: 0,
  nonLinearityPct: 0,
  hysteresisPct: 0,
  outputNoiseMa: 0,
  failure: 'none',
  lowFailureMa: 3.6,
  highFailureMa: 21.0,
};

/** NE 43 measurement band including saturation, mA (REFERENCE.md, NAMUR NE 43 2021). */
export const NE43_SATURATION = { low: 3.8, high: 20.5 } as const;

/** Memory of the transmitter: the hysteresis play position, as a fraction of range. */
export interface TransmitterState {
  /** `undefined` before the first reading. */
  playFraction: number | undefined;
}

/**
 * Moves the hysteresis play to `pressure`: the sensed fraction lags the true one by up to half the
 * band in the direction of travel, so rising and falling readings differ by `hysteresisPct`.
 */
export function trackHysteresis(config: TransmitterConfig, state: TransmitterState, pressure: number): { playFraction: number } {
  const x = (pressure - config.lrv) / (config.urv - config.lrv);
  const half = config.hysteresisPct / 200;
  const prev = state.playFraction ?? x;
  return { playFraction: Math.min(Math.max(prev, x - half), x + half) };
}

/**
 * Flow fraction from a DP fraction through the root and the cutoff (practice, REFERENCE.md):
 * `f = √x`; clamp → 0 below the cutoff flow; linear-below → `flow% = (10/√b)·DP%` under b % DP.
 */
export function rootedFlowFraction(dpFraction: number, cutoff: LowFlowCutoff): number {
  const x = Math.max(0, dpFraction);
  switch (cutoff.mode) {
    case 'none':
      return Math.sqrt(x);
    case 'clamp':
      return Math.sqrt(x) * 100 < cutoff.flowPct ? 0 : Math.sqrt(x);
    case 'linear-below': {
      const b = cutoff.breakpointDpPct;
      const dpPct = x * 100;
      return dpPct < b ? ((10 / Math.sqrt(b)) * dpPct) / 100 : Math.sqrt(x);
    }
  }
}

/**
 * Loop current for an applied pressure. The sensor errors act on the DP fraction (before any root),
 * as in a real transmitter: hysteresis as a play (dead band) of width `hysteresisPct`, then the
 * non-linearity bow, then zero and span. Output `I = 4 + 16·y` mA plus noise, held in the NE 43
 * band 3.8–20.5 mA, or the failure current when a failure is forced.
 */
export function transmitterOutput(
  config: TransmitterConfig,
  state: TransmitterState,
  pressure: number,
  rng: Rng,
): { currentMa: number; state: TransmitterState } {
  const next = trackHysteresis(config, state, pressure);
  const played = next.playFraction;
  if (config.failure === 'low') return { currentMa: config.lowFailureMa, state: next };
  if (config.failure === 'high') return { currentMa: config.highFailureMa, state: next };
  const bowed = played + (config.nonLinearityPct / 100) * 4 * played * (1 - played);
  const measured = config.zeroErrorPct / 100 + (1 + config.spanErrorPct / 100) * bowed;
  const y = config.outputMode === 'sqrt-transmitter' ? rootedFlowFraction(measured, config.cutoff) : measured;
  const noise = config.outputNoiseMa > 0 ? config.outputNoiseMa * gaussian(rng) : 0;
  const current = 4 + 16 * y + noise;
  return { currentMa: Math.min(NE43_SATURATION.high, Math.max(NE43_SATURATION.low, current)), state: next };
}
