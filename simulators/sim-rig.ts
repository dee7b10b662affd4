/**
 * The simulated bench: a pressure source, a transmitter under test, a pressure calibrator and a
 * current meter on a simulated serial binding, an optional autopilot, and one control surface
 * ({@link SimRig.apply}) that the server can expose as `POST /api/sim`.
 */
import { PressureCalibratorEmulator } from './pressure-calibrator-emulator';
import { ScpiMeterEmulator } from './scpi-meter-emulator';
import { HartTransmitterEmulator, type HartFaults } from './hart-transmitter-emulator';
import type { HartDeviceConfig } from './hart-device-commands';
import { createSimBinding, type SimBinding } from './sim-binding';
import type { DeviceFaults } from './line-device';
import { seededRng, type Rng } from '../shared/random';
import { defaultMargin, followPoint, releasePoint, startAutopilot, stepAutopilot, type AutopilotPlan, type AutopilotState } from './autopilot';
import {
  appliedPressure,
  DEFAULT_SOURCE,
  NO_TRIM,
  DEFAULT_TRANSMITTER,
  restingSource,
  setSetpoint,
  stepSource,
  trackHysteresis,
  transmitterOutput,
  type SourceConfig,
  type SourceState,
  type TransmitterConfig,
  type TransmitterReading,
  type TransmitterState,
  type TransmitterTrim,
} from './rig-model';

/** Default serial paths of the simulated devices. */
export const SIM_PATHS = { pressure: '/dev/sim-pressure', current: '/dev/sim-current', hart: '/dev/sim-hart' } as const;

/** HART device faults, plus its cable and a raised "configuration changed" flag. */
export interface SimHartFaults extends Partial<HartFaults> {
  unplugged?: boolean;
  /** Raise the device's "configuration changed" status bit now. */
  configChanged?: boolean;
}

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
  faults?: { pressure?: SimDeviceFaults; current?: SimDeviceFaults; hart?: SimHartFaults };
  /** The HART device's own configuration (tag, descriptor, date, unit code, write protect, …). */
  hart?: Partial<HartDeviceConfig>;
  /** Set the transmitter's trims or fixed current directly (e.g. back to factory trims between tests). */
  trim?: Partial<TransmitterTrim>;
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
  /** The HART device: its port, configuration, trims and fixed current (null: the loop follows the PV). */
  hart: { path: string; plugged: boolean; open: boolean; config: HartDeviceConfig; configChanged: boolean; trim: TransmitterTrim; faults: HartFaults };
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
  paths?: { pressure: string; current: string; hart?: string };
  /** HART device configuration and answer timing (turnaround, wire time). */
  hart?: { config?: Partial<HartDeviceConfig>; turnaroundMs?: number; wireTime?: boolean; needsRts?: boolean };
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
  readonly hart: HartTransmitterEmulator;
  readonly unit: string;
  readonly paths: { pressure: string; current: string; hart: string };
  private readonly now: () => number;
  private readonly rng: Rng;
  private sourceConfig: SourceConfig;
  private transmitter: TransmitterConfig;
  private source: SourceState = restingSource(0);
  private transmitterState: TransmitterState = { playFraction: undefined };
  /** Trims and fixed current the transmitter holds (set over HART). */
  private trim: TransmitterTrim = { ...NO_TRIM };
  /** The pressure the transmitter senses through its damping, rig unit. */
  private damped = 0;
  private lastMs: number;
  private plan: AutopilotPlan | undefined;
  private pilot: AutopilotState | undefined;
  private lastCurrentMa = 4;

  constructor(options: SimRigOptions = {}) {
    this.now = options.now ?? (() => performance.now());
    this.rng = seededRng(options.seed ?? 1);
    this.unit = options.unit ?? 'inH2O@68F';
    this.paths = { hart: SIM_PATHS.hart, ...(options.paths ?? SIM_PATHS) };
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
    this.hart = new HartTransmitterEmulator({
      ...options.hart,
      rng: seededRng((options.seed ?? 1) + 303),
      link: {
        unit: this.unit,
        transmitter: () => this.transmitter,
        read: () => this.readTransmitter(),
        trim: () => ({ ...this.trim }),
        setTrim: (trim) => (this.trim = { ...this.trim, ...trim }),
      },
    });
    this.binding.attach(this.paths.hart, this.hart, { serialNumber: 'SIMHART-00B2C7' });
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
    if (control.faults?.hart) this.applyHartFaults(control.faults.hart);
    if (control.hart) this.hart.state.config = { ...this.hart.state.config, ...control.hart };
    if (control.trim) this.trim = { ...this.trim, ...control.trim };
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
      hart: { ...device(this.paths.hart), config: { ...this.hart.state.config }, configChanged: this.hart.state.configChanged, trim: { ...this.trim }, faults: { ...this.hart.faults } },
    };
  }

  /** Stops device timers (free-running feed). Call when the rig is discarded. */
  dispose(): void {
    this.calibrator.disconnect();
    this.meter.disconnect();
    this.hart.disconnect();
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

  private applyHartFaults(faults: SimHartFaults): void {
    const { unplugged, configChanged, ...rest } = faults;
    const clamp = (v: number | undefined, was: number): number => (v === undefined ? was : Math.min(1, Math.max(0, v)));
    const f = this.hart.faults;
    this.hart.faults = {
      ...f,
      ...rest,
      noAnswer: clamp(rest.noAnswer, f.noAnswer),
      checksumErrors: clamp(rest.checksumErrors, f.checksumErrors),
      lateReplyMs: Math.max(0, rest.lateReplyMs ?? f.lateReplyMs),
    };
    if (configChanged) this.hart.state.configChanged = true;
    if (unplugged === true) this.binding.unplug(this.paths.hart);
    if (unplugged === false) this.binding.replug(this.paths.hart);
  }

  private readPressure(): number {
    this.advance();
    return appliedPressure(this.source);
  }

  /** The loop current now, mA, as a meter in the loop reads it (for tests and the HART trims' reference). */
  readLoopCurrent(): number {
    return this.readTransmitter().currentMa;
  }

  private readCurrent(): number {
    return this.readLoopCurrent();
  }

  /** The transmitter's output now: the loop current the meter reads and the PV HART reports come from this one model. */
  private readTransmitter(): TransmitterReading {
    this.advance();
    const sensed = this.transmitter.dampingS > 0 ? this.damped : appliedPressure(this.source);
    const out = transmitterOutput(this.transmitter, this.transmitterState, sensed, this.rng, this.trim);
    this.transmitterState = out.state;
    this.lastCurrentMa = out.currentMa;
    return out;
  }

  /** Brings the model to the clock's time in steps of at most 50 ms (the approach is exponential; steps keep the autopilot responsive). */
  private advance(): void {
    const target = this.now();
    while (this.lastMs < target) {
      const stepMs = Math.min(50, target - this.lastMs);
      const config = this.plan ? { ...this.sourceConfig, timeConstantS: this.sourceConfig.timeConstantS / (this.plan.speed ?? 1) } : this.sourceConfig;
      this.source = stepSource(this.source, config, stepMs / 1000, this.rng);
      this.lastMs += stepMs;
      const damping = this.transmitter.dampingS;
      this.damped = damping > 0 ? this.damped + (appliedPressure(this.source) - this.damped) * (1 - Math.exp(-stepMs / 1000 / damping)) : appliedPressure(this.source);
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
