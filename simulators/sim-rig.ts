/**
 * The simulated bench: a pressure source, a transmitter under test, a pressure calibrator and a
 * current meter on a simulated serial binding, an optional autopilot, and one control surface
 * ({@link SimRig.apply}) that the server can expose as `POST /api/sim`.
 */
import { PressureCalibratorEmulator } from './pressure-calibrator-emulator';
import { ScpiMeterEmulator } from './scpi-meter-emulator';
import { createSimBinding, type SimBinding } from './sim-binding';
import type { DeviceFaults } from './line-device';
import { seededRng, type Rng } from '../shared/random';
import { defaultMargin, followPoint, releasePoint, startAutopilot, stepAutopilot, type AutopilotPlan, type AutopilotState } from './autopilot';
import {
  appliedPressure,
  DEFAULT_SOURCE,
  DEFAULT_TRANSMITTER,
  restingSource,
  setSetpoint,
  stepSource,
  trackHysteresis,
  transmitterOutput,
  type SourceConfig,
  type SourceState,
  type TransmitterConfig,
  type TransmitterState,
} from './rig-model';

/** Default serial paths of the simulated devices. */
export const SIM_PATHS = { pressure: '/dev/sim-pressure', current: '/dev/sim-current' } as const;

/** Faults for one device; every field optional, omitted fields unchanged. */
export interface SimDeviceFaults {
  /** Pull (`true`) or re-plug (`false`) the device's cable. */
  unplugged?: boolean;
  /** Random bytes before every reply. */
  garbage?: boolean;
  /** Extra reply delay, ms (0 = none). */
  lateReplyMs?: number;
  /** Fraction of replies never sent, 0–1. */
  dropReplies?: number;
  /** Calibrator only: unit printed instead of the true one; `null` clears. */
  wrongUnit?: string | null;
  /** Meter only: readings come back as the SCPI overflow code. */
  overflow?: boolean;
  /** Send this many random bytes once, now. */
  burstBytes?: number;
}

/**
 * Input of {@link SimRig.apply} (and of `POST /api/sim`). Plain data; every part optional.
 * Pressures are in the rig unit; errors in % of span.
 */
export interface SimControl {
  /** Transmitter under test: range, output mode, cutoff, errors, noise, forced NE 43 failure. */
  transmitter?: Partial<TransmitterConfig>;
  /** Pressure source: time constant, pump noise, overshoot, leak (while an autopilot runs, it sets the leak). */
  source?: Partial<SourceConfig>;
  /** Move the pump to a setpoint now (stops the autopilot). */
  setpoint?: { value: number; overshoot?: number };
  /** Device faults. */
  faults?: { pressure?: SimDeviceFaults; current?: SimDeviceFaults };
  /** Start an autopilot run, or `'stop'`. */
  autopilot?: AutopilotPlan | 'stop';
}

/** What the rig is doing now, for the API and tests. */
export interface SimRigSnapshot {
  unit: string;
  /** Applied pressure with pump noise, rig unit. */
  appliedDp: number;
  source: SourceState;
  transmitter: TransmitterConfig;
  sourceConfig: SourceConfig;
  /** Loop current now, mA (with output noise). */
  currentMa: number;
  autopilot: { index: number; phase: string; points: number } | undefined;
  devices: { pressure: { path: string; plugged: boolean; open: boolean }; current: { path: string; plugged: boolean; open: boolean } };
}

/** Options of {@link SimRig}. */
export interface SimRigOptions {
  /** Pressure unit of the rig and the calibrator. Default `'inH2O@68F'`. */
  unit?: string;
  transmitter?: Partial<TransmitterConfig>;
  source?: Partial<SourceConfig>;
  /** Reply latency of both devices, ms. Default 5 ms. */
  latencyMs?: number;
  /** Seed of all randomness. Default 1. */
  seed?: number;
  /** Device paths. Default {@link SIM_PATHS}. */
  paths?: { pressure: string; current: string };
  /** Clock, ms. Default `performance.now`. */
  now?: () => number;
  /** Binding to attach the devices to. Default: a new one. */
  binding?: SimBinding;
}

/**
 * The simulated rig. The model advances lazily to the clock's time whenever a device is read or
 * a snapshot is taken, so it needs no timer of its own.
 */
export class SimRig {
  readonly binding: SimBinding;
  readonly calibrator: PressureCalibratorEmulator;
  readonly meter: ScpiMeterEmulator;
  readonly unit: string;
  readonly paths: { pressure: string; current: string };
  private readonly now: () => number;
  private readonly rng: Rng;
  private sourceConfig: SourceConfig;
  private transmitter: TransmitterConfig;
  private source: SourceState = restingSource(0);
  private transmitterState: TransmitterState = { playFraction: undefined };
  private lastMs: number;
  private plan: AutopilotPlan | undefined;
  private pilot: AutopilotState | undefined;
  private lastCurrentMa = 4;

  constructor(options: SimRigOptions = {}) {
    this.now = options.now ?? (() => performance.now());
    this.rng = seededRng(options.seed ?? 1);
    this.unit = options.unit ?? 'inH2O@68F';
    this.paths = options.paths ?? { ...SIM_PATHS };
    this.sourceConfig = { ...DEFAULT_SOURCE, ...options.source };
    this.transmitter = { ...DEFAULT_TRANSMITTER, ...options.transmitter };
    this.lastMs = this.now();
    const latencyMs = options.latencyMs ?? 5;
    this.calibrator = new PressureCalibratorEmulator({
      readPressure: () => this.readPressure(),
      unit: this.unit,
      latencyMs,
      rng: seededRng((options.seed ?? 1) + 101),
    });
    this.meter = new ScpiMeterEmulator({ readCurrentMa: () => this.readCurrent(), latencyMs, rng: seededRng((options.seed ?? 1) + 202) });
    this.binding = options.binding ?? createSimBinding();
    this.binding.attach(this.paths.pressure, this.calibrator, { serialNumber: 'SIMCAL-0007' });
    this.binding.attach(this.paths.current, this.meter, { serialNumber: 'SIMDMM-0001' });
  }

  /** Applies a control input; returns the state afterwards. */
  apply(control: SimControl): SimRigSnapshot {
    this.advance();
    if (control.transmitter) this.transmitter = { ...this.transmitter, ...control.transmitter };
    if (control.source) this.sourceConfig = { ...this.sourceConfig, ...control.source };
    if (control.setpoint) {
      this.stopAutopilot();
      this.source = setSetpoint(this.source, control.setpoint.value, control.setpoint.overshoot ?? this.sourceConfig.overshoot);
    }
    if (control.faults?.pressure) this.applyFaults('pressure', control.faults.pressure);
    if (control.faults?.current) this.applyFaults('current', control.faults.current);
    if (control.autopilot === 'stop') this.stopAutopilot();
    else if (control.autopilot) this.startAutopilot(control.autopilot);
    return this.snapshot();
  }

  /** Current state (advances the model to now). */
  snapshot(): SimRigSnapshot {
    this.advance();
    const device = (path: string): { path: string; plugged: boolean; open: boolean } => ({
      path,
      plugged: this.binding.isPlugged(path),
      open: this.binding.isOpen(path),
    });
    return {
      unit: this.unit,
      appliedDp: appliedPressure(this.source),
      source: { ...this.source },
      transmitter: { ...this.transmitter },
      sourceConfig: { ...this.sourceConfig },
      currentMa: this.lastCurrentMa,
      autopilot: this.pilot && this.plan ? { index: this.pilot.index, phase: this.pilot.phase, points: this.plan.points.length } : undefined,
      devices: { pressure: device(this.paths.pressure), current: device(this.paths.current) },
    };
  }

  /** Stops device timers (free-running feed). Call when the rig is discarded. */
  dispose(): void {
    this.calibrator.disconnect();
    this.meter.disconnect();
  }

  private startAutopilot(plan: AutopilotPlan): void {
    const margin = plan.approachMargin ?? defaultMargin(plan);
    this.plan = { ...plan, approachMargin: margin };
    this.pilot = startAutopilot(this.lastMs / 1000, plan.startIndex ?? 0, plan.points.length);
    this.pilotStep();
  }

  /** Tells the autopilot the run is now at point `index` (null: the run ended), so it goes there. */
  followAutopilotPoint(index: number | null): void {
    if (!this.plan || !this.pilot) return;
    this.advance();
    this.pilot = followPoint(this.plan, this.pilot, index, this.lastMs / 1000);
    // The run ended (or was aborted) while the autopilot's own leak acted: the leak ends with it, as
    // it does when the autopilot finishes a plan, so the next run does not start on a leaking rig.
    if (this.pilot.phase === 'done' && this.plan.leak) this.sourceConfig = { ...this.sourceConfig, leakPerMin: 0 };
    this.pilotStep();
  }

  /** Tells the autopilot that point `index` was captured, so it moves on without waiting out its dwell. */
  releaseAutopilotPoint(index: number): void {
    if (this.pilot) this.pilot = releasePoint(this.pilot, index);
  }

  private stopAutopilot(): void {
    this.plan = undefined;
    this.pilot = undefined;
  }

  private applyFaults(which: 'pressure' | 'current', faults: SimDeviceFaults): void {
    const device = which === 'pressure' ? this.calibrator : this.meter;
    const path = this.paths[which];
    const next: DeviceFaults = { ...device.faults };
    if (faults.garbage !== undefined) next.garbage = faults.garbage;
    if (faults.lateReplyMs !== undefined) next.lateReplyMs = Math.max(0, faults.lateReplyMs);
    if (faults.dropReplies !== undefined) next.dropReplies = Math.min(1, Math.max(0, faults.dropReplies));
    device.faults = next;
    if (which === 'pressure' && faults.wrongUnit !== undefined) this.calibrator.wrongUnit = faults.wrongUnit ?? undefined;
    if (which === 'current' && faults.overflow !== undefined) this.meter.overflow = faults.overflow;
    if (faults.burstBytes) device.injectBytes(Uint8Array.from({ length: faults.burstBytes }, () => Math.floor(this.rng() * 256)));
    if (faults.unplugged === true) this.binding.unplug(path);
    if (faults.unplugged === false) this.binding.replug(path);
  }

  private readPressure(): number {
    this.advance();
    return appliedPressure(this.source);
  }

  private readCurrent(): number {
    this.advance();
    const out = transmitterOutput(this.transmitter, this.transmitterState, appliedPressure(this.source), this.rng);
    this.transmitterState = out.state;
    this.lastCurrentMa = out.currentMa;
    return out.currentMa;
  }

  /** Brings the model to the clock's time in steps of at most 50 ms (the approach is exponential; steps keep the autopilot responsive). */
  private advance(): void {
    const target = this.now();
    while (this.lastMs < target) {
      const stepMs = Math.min(50, target - this.lastMs);
      const config = this.plan ? { ...this.sourceConfig, timeConstantS: this.sourceConfig.timeConstantS / (this.plan.speed ?? 1) } : this.sourceConfig;
      this.source = stepSource(this.source, config, stepMs / 1000, this.rng);
      this.lastMs += stepMs;
      // The transmitter's hysteresis follows the pressure path even between meter reads.
      this.transmitterState = trackHysteresis(this.transmitter, this.transmitterState, appliedPressure(this.source));
      this.pilotStep();
    }
  }

  private pilotStep(): void {
    if (!this.plan || !this.pilot) return;
    const { state, command } = stepAutopilot(this.plan, this.pilot, this.source, this.lastMs / 1000);
    this.pilot = state;
    if (!command) return;
    this.sourceConfig = { ...this.sourceConfig, leakPerMin: command.leakPerMin };
    if (command.setpoint) this.source = setSetpoint(this.source, command.setpoint.value, command.setpoint.overshoot);
  }
}
