/**
 * The bench's HART modem: a managed port at 1200 bit/s 8O1 and a HART master driver on it. Finds
 * the transmitter after every (re)connect and reads its dynamic variables at a slow rate, so the
 * Bench page shows the device, the last command, the counters and the last error. Closing always
 * tries to leave fixed current first (the driver's own rule).
 */
import { describeDeviceStatus, type HartIdentity } from '../../shared/protocol/hart';
import { HartMasterDriver, type HartDriverStats, type HartModemType, type HartTransaction } from './protocols';
import { openPort, type BindingInterface, type ManagedPort } from './transport';

/** HART on the wire: 1200 bit/s, 8 data bits, odd parity, 1 stop bit (from memory of the FSK physical layer spec, HCF_SPEC-054). */
export const HART_LINE_SETTINGS = { baudRate: 1200, dataBits: 8, parity: 'odd', stopBits: 1 } as const;

/** Options of {@link HartModem}. */
export interface HartModemOptions {
  path: string;
  binding: BindingInterface;
  /** `'usb'` (keys itself) or `'rts'` (an RS-232 modem keyed by RTS). Default `'usb'`. */
  modem?: HartModemType;
  /** Interval of the background command 3 read, ms; 0 for none. Default 1000 ms (a command 3 takes about 0.45 s at 1200 bit/s). */
  pollMs?: number;
  /** Every transaction, for logs (and, later, the record). */
  onTransaction?(t: HartTransaction): void;
}

/** What the Bench page shows of the HART modem. */
export interface HartModemStatus {
  path: string;
  connected: boolean;
  state: string;
  modem: HartModemType;
  baudRate: number;
  protocol: string;
  /** The transmitter found by command 0, or null before one answers. */
  device: { deviceId: number; expandedDeviceType: number; universalRevision: number } | null;
  loopCurrentFixed: boolean;
  /** The last reply's field device status in words. */
  deviceStatus: string[];
  lastCommand: Pick<HartTransaction, 'command' | 'name' | 'at' | 'outcome' | 'responseCode'> | null;
  lastError: { code: string; message: string; at: number } | null;
  stats: HartDriverStats;
}

/** One background command 3 reading: the digital PV and the loop current the device says it drives. */
export interface HartDynamicReading {
  /** Wall clock when the reply came, ms since the epoch. */
  at: number;
  pv: number;
  pvUnitCode: number;
  loopMa: number;
}

/** Readings kept for the capture path (about two minutes at the default rate). */
const KEPT_READINGS = 120;

export class HartModem {
  /** The latest command 3 readings, oldest first. */
  readonly readings: HartDynamicReading[] = [];
  readonly port: ManagedPort;
  readonly driver: HartMasterDriver;
  private readonly modem: HartModemType;
  private timer: NodeJS.Timeout | undefined;
  private busy = false;
  private found: HartIdentity | undefined;
  private lastError: HartModemStatus['lastError'] = null;

  constructor(private readonly o: HartModemOptions) {
    this.modem = o.modem ?? 'usb';
    const { baudRate, ...lineSettings } = HART_LINE_SETTINGS;
    this.port = openPort({ path: o.path, binding: o.binding, baudRate, lineSettings });
    this.driver = new HartMasterDriver(this.port, { modem: this.modem });
    this.driver.on('transaction.completed', (t) => {
      if (t.outcome === 'error' && t.error) this.lastError = { ...t.error, at: t.at };
      o.onTransaction?.(t);
    });
    this.driver.on('cleanup.failed', (e) => (this.lastError = { code: 'cleanup-failed', message: e.message, at: Date.now() }));
    this.driver.on('port.status', (e) => {
      this.found = undefined;
      if (e.type === 'device.connected') void this.tick();
    });
  }

  /** Opens the port (retrying until it appears) and starts the slow background read. */
  start(): void {
    this.port.open().catch(() => {});
    const every = this.o.pollMs ?? 1000;
    if (every > 0) this.timer = setInterval(() => void this.tick(), every);
  }

  private async tick(): Promise<void> {
    if (this.busy || !this.port.connected) return;
    this.busy = true;
    try {
      if (!this.found) this.found = await this.driver.identify();
      const { value } = await this.driver.readDynamicVariables();
      const pv = value.variables[0];
      if (pv) {
        this.readings.push({ at: Date.now(), pv: pv.value, pvUnitCode: pv.unitCode, loopMa: value.currentMa });
        if (this.readings.length > KEPT_READINGS) this.readings.shift();
      }
    } catch {
      // Kept as lastError by the transaction listener; the next tick tries again.
    } finally {
      this.busy = false;
    }
  }

  /** Command 3 readings between `fromMs` and `toMs` (wall clock, inclusive). */
  readingsBetween(fromMs: number, toMs: number): HartDynamicReading[] {
    return this.readings.filter((r) => r.at >= fromMs && r.at <= toMs);
  }

  status(): HartModemStatus {
    const last = this.driver.lastTransaction;
    const id = this.found;
    return {
      path: this.port.path,
      connected: this.port.connected,
      state: this.port.state,
      modem: this.modem,
      baudRate: HART_LINE_SETTINGS.baudRate,
      protocol: 'HART (FSK modem, 8O1)',
      device: id ? { deviceId: id.deviceId, expandedDeviceType: id.expandedDeviceType, universalRevision: id.universalRevision } : null,
      loopCurrentFixed: this.driver.loopCurrentFixed,
      deviceStatus: describeDeviceStatus(this.driver.deviceStatus ?? 0),
      lastCommand: last ? { command: last.command, name: last.name, at: last.at, outcome: last.outcome, ...(last.responseCode !== undefined ? { responseCode: last.responseCode } : {}) } : null,
      lastError: this.lastError,
      stats: this.driver.stats,
    };
  }

  /** Stops the background read, leaves fixed current if it may be on, and closes the port. */
  async stop(): Promise<void> {
    clearInterval(this.timer);
    await this.driver.close();
    await this.port.close();
  }
}
