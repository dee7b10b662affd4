/**
 * A serialport binding over simulated devices: `new SerialPortStream({ binding, path, baudRate })`
 * runs the real stream, parsers and timeouts against the emulators. Cables can be pulled on demand.
 */
import type { BindingInterface, BindingPortInterface, OpenOptions, PortInfo, PortStatus, SetOptions, UpdateOptions } from '../server/bench/transport/binding-types';
import type { SimDevice } from './line-device';

/** A binding error; `canceled` marks reads and writes cut short by our own close. */
export class SimBindingError extends Error {
  constructor(
    message: string,
    readonly canceled = false,
    readonly disconnected = false,
  ) {
    super(message);
    this.name = 'SimBindingError';
  }
}

interface Slot {
  device: SimDevice;
  info: PortInfo;
  plugged: boolean;
  open: SimPortBinding | undefined;
}

const OPEN_DEFAULTS = {
  dataBits: 8,
  lock: true,
  stopBits: 1,
  parity: 'none',
  rtscts: false,
  xon: false,
  xoff: false,
  xany: false,
  hupcl: true,
} as const;

/** One open simulated port. */
export class SimPortBinding implements BindingPortInterface {
  readonly openOptions: Required<OpenOptions>;
  isOpen = true;
  private readonly slot: Slot;
  private rx: Buffer[] = [];
  private pendingRead: (() => void) | undefined;
  private pulled = false;

  constructor(slot: Slot, openOptions: Required<OpenOptions>) {
    this.slot = slot;
    this.openOptions = openOptions;
    slot.device.connect((data) => this.deliver(data));
  }

  /** Device output arriving at the host. */
  private deliver(data: Uint8Array): void {
    if (!this.isOpen || this.pulled || data.length === 0) return;
    this.rx.push(Buffer.from(data));
    const wake = this.pendingRead;
    this.pendingRead = undefined;
    wake?.();
  }

  /** The cable is pulled: the pending read fails like a vanished tty, later calls fail too. */
  pull(): void {
    if (this.pulled) return;
    this.pulled = true;
    this.slot.device.disconnect();
    const wake = this.pendingRead;
    this.pendingRead = undefined;
    wake?.();
  }

  async close(): Promise<void> {
    if (!this.isOpen) throw new SimBindingError('Port is not open');
    this.isOpen = false;
    if (this.slot.open === this) this.slot.open = undefined;
    if (!this.pulled) this.slot.device.disconnect();
    this.rx = [];
    const wake = this.pendingRead;
    this.pendingRead = undefined;
    wake?.();
  }

  async read(buffer: Buffer, offset: number, length: number): Promise<{ buffer: Buffer; bytesRead: number }> {
    for (;;) {
      if (!this.isOpen) throw new SimBindingError('Read canceled', true);
      if (this.pulled) throw new SimBindingError(`${this.openOptions.path}: device disconnected (EIO)`, false, true);
      const head = this.rx[0];
      if (head) {
        const n = head.copy(buffer, offset, 0, Math.min(length, head.length));
        if (n === head.length) this.rx.shift();
        else this.rx[0] = head.subarray(n);
        return { buffer, bytesRead: n };
      }
      await new Promise<void>((resolve) => (this.pendingRead = resolve));
    }
  }

  async write(buffer: Buffer): Promise<void> {
    await Promise.resolve();
    if (!this.isOpen) throw new SimBindingError('Write canceled', true);
    if (this.pulled) throw new SimBindingError(`${this.openOptions.path}: device disconnected (EIO)`, false, true);
    this.slot.device.receive(Uint8Array.from(buffer));
  }

  async update(options: UpdateOptions): Promise<void> {
    this.check();
    this.openOptions.baudRate = options.baudRate;
  }

  async set(options: SetOptions): Promise<void> {
    this.check();
    this.slot.device.setLines?.({ ...(options.rts !== undefined ? { rts: options.rts } : {}), ...(options.dtr !== undefined ? { dtr: options.dtr } : {}) });
  }

  async get(): Promise<PortStatus> {
    this.check();
    return { cts: true, dsr: true, dcd: false };
  }

  async getBaudRate(): Promise<{ baudRate: number }> {
    this.check();
    return { baudRate: this.openOptions.baudRate };
  }

  async flush(): Promise<void> {
    this.check();
    this.rx = [];
  }

  async drain(): Promise<void> {
    this.check();
  }

  private check(): void {
    if (!this.isOpen) throw new SimBindingError('Port is not open');
    if (this.pulled) throw new SimBindingError(`${this.openOptions.path}: device disconnected (EIO)`, false, true);
  }
}

/** The simulator's binding plus the controls a test or the sim API needs. */
export interface SimBinding extends BindingInterface<SimPortBinding> {
  /** Connects a device at `path` (plugged in). */
  attach(path: string, device: SimDevice, info?: Partial<Omit<PortInfo, 'path'>>): void;
  /** Pulls the cable: the port vanishes from `list()`, an open port fails, opens are refused. */
  unplug(path: string): void;
  /** Plugs the cable back in; the next open succeeds. */
  replug(path: string): void;
  /** True when a device is attached at `path` and plugged in. */
  isPlugged(path: string): boolean;
  /** True when a host has `path` open. */
  isOpen(path: string): boolean;
}

/**
 * Creates an empty simulated binding. Attach devices, then open them with `SerialPortStream` or
 * the transport's `openPort({ binding })`.
 */
export function createSimBinding(): SimBinding {
  const slots = new Map<string, Slot>();
  return {
    attach(path, device, info = {}) {
      slots.set(path, {
        device,
        plugged: true,
        open: undefined,
        info: {
          manufacturer: 'Stillpoint simulator',
          serialNumber: undefined,
          pnpId: `sim-${path.split('/').pop() ?? path}`,
          locationId: undefined,
          productId: undefined,
          vendorId: undefined,
          ...info,
          path,
        },
      });
    },
    unplug(path) {
      const slot = slots.get(path);
      if (!slot) return;
      slot.plugged = false;
      // The pulled port stays with its host until closed, but no longer holds the lock.
      slot.open?.pull();
      slot.open = undefined;
    },
    replug(path) {
      const slot = slots.get(path);
      if (slot) slot.plugged = true;
    },
    isPlugged: (path) => slots.get(path)?.plugged ?? false,
    isOpen: (path) => slots.get(path)?.open !== undefined,
    async list() {
      return [...slots.values()].filter((s) => s.plugged).map((s) => ({ ...s.info }));
    },
    async open(options) {
      if (!options?.path) throw new TypeError('"path" is not a valid port');
      if (typeof options.baudRate !== 'number') throw new TypeError('"baudRate" is not a valid baudRate');
      await Promise.resolve();
      const slot = slots.get(options.path);
      if (!slot || !slot.plugged) throw new SimBindingError(`Error: No such file or directory, cannot open ${options.path}`);
      if (slot.open) throw new SimBindingError(`Error Resource temporarily unavailable Cannot lock port ${options.path}`);
      const port = new SimPortBinding(slot, { ...OPEN_DEFAULTS, ...options } as Required<OpenOptions>);
      slot.open = port;
      return port;
    },
  };
}
