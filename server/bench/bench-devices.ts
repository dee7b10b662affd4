/**
 * The two instruments of one bench on managed ports: the pressure calibrator (line protocol) and
 * the current meter (SCPI), each polled at 10 readings/s. Readings, rejected lines and port status
 * go to the callbacks as they arrive; used by the server's bench runtime and by the bench agent.
 */
import { SIMCAL_PROFILE, type DeviceKind, type LineProtocolProfile } from '../../shared/protocol';
import { LineCalibratorDriver, ScpiMeterDriver, type BenchDriver, type DriverStats } from './protocols';
import { openPort, type BindingInterface, type ManagedPort } from './transport';
import { HartModem, type HartModemStatus } from './hart-modem';
import type { HartModemType } from './protocols';

/** Options of {@link BenchDevices}. */
export interface BenchDevicesOptions {
  benchId: string;
  binding: BindingInterface;
  paths: { pressure: string; current: string };
  profile?: LineProtocolProfile;
  /** A HART modem on the bench (optional): its port and how it is keyed. */
  hart?: { path: string; modem?: HartModemType; pollMs?: number };
  /** Readings/s per device. Default 10. */
  pollRateHz?: number;
  onSample(device: DeviceKind, raw: string, value: number | null, unit: string | null): void;
  onStatus(event: { type: 'device.connected' | 'device.disconnected'; device: DeviceKind; path: string; at: number; reason?: string }): void;
  onError?(device: DeviceKind, error: Error): void;
}

export class BenchDevices {
  readonly benchId: string;
  private readonly ports: Record<DeviceKind, ManagedPort>;
  private readonly drivers: Record<DeviceKind, BenchDriver>;
  private readonly meter: ScpiMeterDriver;
  /** The HART modem, when the bench has one. */
  readonly hart: HartModem | undefined;

  constructor(private readonly o: BenchDevicesOptions) {
    this.benchId = o.benchId;
    const pressure = openPort({ path: o.paths.pressure, binding: o.binding, baudRate: 9600 });
    const current = openPort({ path: o.paths.current, binding: o.binding, baudRate: 9600 });
    this.ports = { pressure, current };
    const calibrator = new LineCalibratorDriver(pressure, o.profile ?? SIMCAL_PROFILE, { pollRateHz: o.pollRateHz ?? 10 });
    this.meter = new ScpiMeterDriver(current, { pollRateHz: o.pollRateHz ?? 10 });
    this.drivers = { pressure: calibrator, current: this.meter };
    this.hart = o.hart ? new HartModem({ path: o.hart.path, binding: o.binding, modem: o.hart.modem, pollMs: o.hart.pollMs }) : undefined;
    for (const device of ['pressure', 'current'] as const) {
      const d = this.drivers[device];
      // Decoded readings and rejected lines are both kept: every raw line is part of the record.
      d.on('sample.received', (s) => o.onSample(device, s.raw, s.value, s.unit));
      d.on('line.rejected', (b) => o.onSample(device, b.raw, null, null));
      d.on('read.failed', (e) => o.onError?.(device, e));
      d.on('port.status', (ev) =>
        o.onStatus(ev.type === 'device.connected' ? { type: ev.type, device, path: ev.path, at: ev.at } : { type: ev.type, device, path: ev.path, at: ev.at, reason: ev.reason }),
      );
    }
  }

  /** Configures the meter once it is connected (re-done by the driver after reconnects) and starts polling. */
  start(): void {
    let polling = false;
    const configure = (): void => {
      this.meter.configure().then(() => {
        if (!polling) this.drivers.current.startPolling(this.o.pollRateHz ?? 10);
        polling = true;
      }, (e: Error) => {
        this.o.onError?.('current', e);
        setTimeout(() => {
          if (this.ports.current.state !== 'closed') configure();
        }, 1000).unref();
      });
    };
    this.ports.current.open().then(configure, () => {});
    this.ports.pressure.open().catch(() => {});
    this.drivers.pressure.startPolling(this.o.pollRateHz ?? 10);
    this.hart?.start();
  }

  /** Whether each device is connected, with its path and counters. */
  status(): Record<DeviceKind, { path: string; connected: boolean; state: string; stats: DriverStats }> & { hart?: HartModemStatus } {
    const one = (d: DeviceKind) => ({ path: this.ports[d].path, connected: this.ports[d].connected, state: this.ports[d].state, stats: this.drivers[d].stats });
    return { pressure: one('pressure'), current: one('current'), ...(this.hart ? { hart: this.hart.status() } : {}) };
  }

  async stop(): Promise<void> {
    // First, while the port is still open: the HART modem leaves fixed current if it may be on.
    await this.hart?.stop();
    for (const d of Object.values(this.drivers)) d.close();
    await Promise.all(Object.values(this.ports).map((p) => p.close()));
  }
}
