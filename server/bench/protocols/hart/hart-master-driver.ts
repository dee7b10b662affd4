/**
 * A HART master on one port (a HART modem): finds the device at its polling address with command
 * 0, then talks to it by its unique (long) address; typed reads, fixed current and trims; every
 * transaction reported with its bytes. Fixed current is always left on close, after a reconnect,
 * and at the end of {@link HartMasterDriver.withFixedCurrent}, whatever happened in between.
 */
import { EventEmitter } from 'node:events';
import {
  CMD0_IDENTITY,
  CMD13_TAG,
  CMD15_INFO,
  CMD1_PV,
  CMD2_CURRENT,
  CMD38_RESET_CHANGED,
  CMD3_DYNAMIC,
  CMD40_FIXED_CURRENT,
  CMD43_ZERO,
  CMD45_TRIM_ZERO,
  CMD46_TRIM_GAIN,
  DEVICE_STATUS,
  isSuccess,
  toHex,
  uniqueIdOf,
  type HartAddress,
  type HartCommandCodec,
  type HartIdentity,
  type HartMaster,
} from '../../../../shared/protocol/hart';
import type { DevicePort, PortStatusEvent } from '../../transport/device-port';
import { HartBadReplyError, HartError, HartPortError, HartResponseError, HartWriteProtectedError } from './hart-errors';
import { HartLink, type HartLinkOptions, type HartLinkStats, type HartModemType } from './hart-link';

/** Options of {@link HartMasterDriver}. */
export interface HartDriverOptions extends HartLinkOptions {
  /** Polling address to look for the device at. Default 0. */
  pollingAddress?: number;
  /** Which master Stillpoint is. Default primary (a handheld is usually the secondary). */
  master?: HartMaster;
  /** Wall clock for the record, ms since the epoch. Default `Date.now`. */
  now?: () => number;
}

/** One finished (or failed) transaction, as the record keeps it. */
export interface HartTransaction {
  command: number;
  name: string;
  /** Whether the command changes the device. */
  writes: boolean;
  at: number;
  /** Request and reply frames as spaced hex; the reply is absent when none came. */
  request: string;
  reply?: string;
  responseCode?: number;
  deviceStatus?: number;
  attempts?: number;
  outcome: 'ok' | 'error';
  error?: { code: string; message: string };
}

/** Events of the driver. */
export interface HartDriverEvents {
  'transaction.completed': [HartTransaction];
  'port.status': [PortStatusEvent];
  /** A clean-up (leaving fixed current) that failed; the driver tries again after the next reconnect. */
  'cleanup.failed': [Error];
}

/** Counters of the driver. */
export interface HartDriverStats extends HartLinkStats {
  transactions: number;
  errors: number;
}

/** A typed reply with the status bytes it came with. */
export interface HartResult<T> {
  value: T;
  responseCode: number;
  deviceStatus: number;
}

export class HartMasterDriver extends EventEmitter<HartDriverEvents> {
  private readonly link: HartLink;
  private readonly master: HartMaster;
  private readonly pollingAddress: number;
  private readonly now: () => number;
  private readonly unsubscribe: () => void;
  private identified: { identity: HartIdentity; address: HartAddress } | undefined;
  private fixedWanted = false;
  private counts = { transactions: 0, errors: 0 };
  private last: HartTransaction | undefined;
  private status: number | undefined;

  constructor(
    readonly port: DevicePort,
    options: HartDriverOptions = {},
  ) {
    super();
    this.link = new HartLink(port, options);
    this.master = options.master ?? 'primary';
    this.pollingAddress = options.pollingAddress ?? 0;
    this.now = options.now ?? Date.now;
    this.unsubscribe = port.onStatus((event) => {
      // Another device may be on the port after a reconnect: find it again before talking to it.
      this.identified = undefined;
      this.emit('port.status', event);
      if (event.type === 'device.connected' && this.fixedWanted) void this.leaveFixedCurrent().catch((e: Error) => this.emit('cleanup.failed', e));
    });
  }

  /** The modem type in use. */
  get modem(): HartModemType {
    return this.link.modem;
  }

  /** The device found by the last {@link identify}, if any. */
  get identity(): HartIdentity | undefined {
    return this.identified?.identity;
  }

  /** The field device status byte of the last reply. */
  get deviceStatus(): number | undefined {
    return this.status;
  }

  /** True while Stillpoint has asked for fixed current and not yet seen it left, or the device reports it fixed. */
  get loopCurrentFixed(): boolean {
    return this.fixedWanted || ((this.status ?? 0) & DEVICE_STATUS.loopCurrentFixed) !== 0;
  }

  /** The last transaction. */
  get lastTransaction(): HartTransaction | undefined {
    return this.last;
  }

  get stats(): HartDriverStats {
    return { ...this.link.stats, ...this.counts };
  }

  /** Command 0 at the polling address; later commands use the long address built from its reply. */
  async identify(): Promise<HartIdentity> {
    const address: HartAddress = { type: 'short', master: this.master, burst: false, pollingAddress: this.pollingAddress };
    const { value } = await this.exchange(CMD0_IDENTITY, undefined, address);
    this.identified = { identity: value, address: { type: 'long', master: this.master, burst: false, uniqueId: uniqueIdOf(value) } };
    return value;
  }

  readPrimaryVariable = () => this.send(CMD1_PV, undefined);
  readLoopCurrent = () => this.send(CMD2_CURRENT, undefined);
  readDynamicVariables = () => this.send(CMD3_DYNAMIC, undefined);
  readTagDescriptorDate = () => this.send(CMD13_TAG, undefined);
  readDeviceInformation = () => this.send(CMD15_INFO, undefined);
  resetConfigurationChanged = () => this.send(CMD38_RESET_CHANGED, undefined);
  /** Command 43: the applied pressure becomes the PV's zero. */
  setPvZero = () => this.send(CMD43_ZERO, undefined);
  /** Command 45 with the reference meter's reading while the loop is fixed at 4 mA. */
  trimLoopZero = (measuredMa: number) => this.send(CMD45_TRIM_ZERO, { currentMa: measuredMa });
  /** Command 46 with the reference meter's reading while the loop is fixed at 20 mA. */
  trimLoopGain = (measuredMa: number) => this.send(CMD46_TRIM_GAIN, { currentMa: measuredMa });

  /** Command 40: fixes the loop current at `currentMa` (> 0); resolves with the level the device reports. */
  async enterFixedCurrent(currentMa: number): Promise<number> {
    if (!(Number.isFinite(currentMa) && currentMa > 0)) throw new RangeError(`fixed current must be a positive number of mA, got ${currentMa}`);
    // Wanted before it is sent: a reply lost on the way still leaves the loop to be released.
    this.fixedWanted = true;
    return (await this.send(CMD40_FIXED_CURRENT, { currentMa })).value.currentMa;
  }

  /** Command 40 with 0: back to the measured output. Rejects on failure; the driver retries after the next reconnect. */
  async leaveFixedCurrent(): Promise<void> {
    await this.send(CMD40_FIXED_CURRENT, { currentMa: 0 });
    this.fixedWanted = false;
  }

  /** Runs `task` with the loop fixed at `currentMa`, and leaves fixed current afterwards whether `task` succeeded or not. */
  async withFixedCurrent<T>(currentMa: number, task: (level: number) => Promise<T>): Promise<T> {
    try {
      return await task(await this.enterFixedCurrent(currentMa));
    } finally {
      await this.leaveFixedCurrent().catch((e: Error) => this.emit('cleanup.failed', e));
    }
  }

  /** Leaves fixed current if it may be on (always attempted), then stops listening. The port stays open. */
  async close(): Promise<void> {
    if (this.loopCurrentFixed && this.port.connected) await this.leaveFixedCurrent().catch((e: Error) => this.emit('cleanup.failed', e));
    this.link.close();
    this.unsubscribe();
  }

  /** Sends a command to the identified device (identifying it first when needed). */
  async send<Req, Res>(codec: HartCommandCodec<Req, Res>, request: Req): Promise<HartResult<Res>> {
    if (!this.identified) await this.identify();
    const address = this.identified?.address;
    if (!address) throw new HartPortError(codec.command, this.port.path, 'no device identified');
    return this.exchange(codec, request, address);
  }

  private async exchange<Req, Res>(codec: HartCommandCodec<Req, Res>, request: Req, address: HartAddress): Promise<HartResult<Res>> {
    const record: HartTransaction = { command: codec.command, name: codec.name, writes: codec.writes, at: this.now(), request: '', outcome: 'ok' };
    try {
      const data = codec.encodeRequest(request);
      const exchange = await this.link.transact(address, codec.command, data);
      const status = exchange.frame.status ?? { responseCode: 0, deviceStatus: 0 };
      Object.assign(record, { request: toHex(exchange.request), reply: toHex(exchange.reply), attempts: exchange.attempts, ...status });
      this.status = status.deviceStatus;
      if (!isSuccess(status.responseCode)) {
        const E = status.responseCode === 7 ? HartWriteProtectedError : HartResponseError;
        throw new E(codec.command, this.port.path, status.responseCode, status.deviceStatus);
      }
      const value = codec.decodeResponse(exchange.frame.data);
      if (value === undefined && !codec.noData) throw new HartBadReplyError(codec.command, this.port.path, exchange.frame.data.length);
      this.finish(record);
      return { value: value as Res, ...status };
    } catch (error) {
      const e = error instanceof Error ? error : new Error(String(error));
      record.outcome = 'error';
      record.error = { code: e instanceof HartError ? e.code : 'error', message: e.message };
      this.counts.errors += 1;
      this.finish(record);
      throw e;
    }
  }

  private finish(record: HartTransaction): void {
    this.counts.transactions += 1;
    this.last = record;
    this.emit('transaction.completed', record);
  }
}
