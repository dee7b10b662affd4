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
  /** Error of the output stage (D/A) at 4 mA, mA: what the loop-current zero trim corrects. Default 0. */
  daErrorAt4Ma: number;
  /** Error of the output stage (D/A) at 20 mA, mA: what the loop-current gain trim corrects. Default 0. */
  daErrorAt20Ma: number;
  /** PV damping, s: the first-order time constant of the sensed pressure. Default 0 (none). */
  dampingS: number;
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
  daErrorAt4Ma: 0,
  daErrorAt20Ma: 0,
  dampingS: 0,
};

/**
 * What the transmitter keeps of its trims and output mode, set over HART: a sensor zero offset
 * (command 43), loop-current corrections at 4 and 20 mA (commands 45 and 46), and a fixed output
 * current (command 40), or null for the measured output.
 */
export interface TransmitterTrim {
  /** Added to the sensed pressure, rig unit. */
  sensorZero: number;
  /** Correction taken off the D/A input at 4 mA, mA. */
  loopAt4Ma: number;
  /** Correction taken off the D/A input at 20 mA, mA. */
  loopAt20Ma: number;
  /** Fixed loop current, mA, or null. */
  fixedMa: number | null;
}

/** Factory trims: no corrections, measured output. */
export const NO_TRIM: TransmitterTrim = Object.freeze({ sensorZero: 0, loopAt4Ma: 0, loopAt20Ma: 0, fixedMa: null });

/** A value that is `at4` at 4 mA and `at20` at 20 mA, straight between. */
function acrossSpan(at4: number, at20: number, ma: number): number {
  return at4 + ((at20 - at4) * (ma - 4)) / 16;
}

/** The current the output stage drives for a commanded current: the trims' correction first, then the D/A's own error. */
export function analogOutput(config: TransmitterConfig, trim: TransmitterTrim, commandedMa: number): number {
  const dacInput = commandedMa - acrossSpan(trim.loopAt4Ma, trim.loopAt20Ma, commandedMa);
  return dacInput + acrossSpan(config.daErrorAt4Ma, config.daErrorAt20Ma, dacInput);
}

/** Fixed-current limits of the simulated output stage, mA (a simulator choice). */
export const FIXED_CURRENT_LIMITS = { low: 3.5, high: 23 } as const;

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

/** What the transmitter puts out for one applied pressure. */
export interface TransmitterReading {
  /** Loop current at the terminals, mA (what a meter reads). */
  currentMa: number;
  /** Current the transmitter believes it drives, mA (what it reports over HART). */
  commandedMa: number;
  /** Sensed pressure, rig unit: the digital PV. */
  pv: number;
  /** Output as a fraction of range after the transfer function (0 at 4 mA, 1 at 20 mA). */
  outputFraction: number;
  /** The measured output was held at the NE 43 saturation limits. */
  saturated: boolean;
  state: TransmitterState;
}

/**
 * Loop current for an applied pressure. The sensor errors act on the DP fraction (before any root),
 * as in a real transmitter: hysteresis as a play (dead band) of width `hysteresisPct`, then the
 * non-linearity bow, then zero and span, then the sensor zero trim; that sensed pressure is the
 * digital PV. The output `4 + 16·y` mA (or the fixed current) passes the loop trims and the D/A
 * error, plus noise; a measured output is held in the NE 43 band 3.8–20.5 mA. A forced failure
 * drives its failure current.
 */
export function transmitterOutput(
  config: TransmitterConfig,
  state: TransmitterState,
  pressure: number,
  rng: Rng,
  trim: TransmitterTrim = NO_TRIM,
): TransmitterReading {
  const next = trackHysteresis(config, state, pressure);
  const played = next.playFraction;
  const bowed = played + (config.nonLinearityPct / 100) * 4 * played * (1 - played);
  const measured = config.zeroErrorPct / 100 + (1 + config.spanErrorPct / 100) * bowed;
  const span = config.urv - config.lrv;
  const pv = config.lrv + measured * span + trim.sensorZero;
  const sensedFraction = measured + trim.sensorZero / span;
  const y = config.outputMode === 'sqrt-transmitter' ? rootedFlowFraction(sensedFraction, config.cutoff) : sensedFraction;
  const failure = config.failure === 'low' ? config.lowFailureMa : config.failure === 'high' ? config.highFailureMa : undefined;
  if (failure !== undefined) return { currentMa: failure, commandedMa: failure, pv, outputFraction: y, saturated: false, state: next };
  const noise = config.outputNoiseMa > 0 ? config.outputNoiseMa * gaussian(rng) : 0;
  if (trim.fixedMa !== null) {
    const fixed = Math.min(FIXED_CURRENT_LIMITS.high, Math.max(FIXED_CURRENT_LIMITS.low, trim.fixedMa));
    return { currentMa: analogOutput(config, trim, fixed) + noise, commandedMa: fixed, pv, outputFraction: y, saturated: false, state: next };
  }
  const wanted = 4 + 16 * y;
  const commanded = Math.min(NE43_SATURATION.high, Math.max(NE43_SATURATION.low, wanted));
  const current = analogOutput(config, trim, commanded) + noise;
  return { currentMa: Math.min(NE43_SATURATION.high, Math.max(NE43_SATURATION.low, current)), commandedMa: commanded, pv, outputFraction: y, saturated: commanded !== wanted, state: next };
}
