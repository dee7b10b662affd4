/**
 * The simulated instruments on real pseudo-terminals: one `socat` pty pair per device, the
 * emulator on one end, the other end for Stillpoint (or any serial program) to open.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { access, mkdir, mkdtemp } from 'node:fs/promises';
import { constants } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { SerialPort } from 'serialport';
import type { SimDevice } from './line-device';
import { SimRig, type SimRigOptions } from './sim-rig';

/** Where socat lives, or `undefined` when it is not installed. */
export async function findSocat(): Promise<string | undefined> {
  for (const dir of (process.env.PATH ?? '/usr/bin:/bin').split(path.delimiter)) {
    const candidate = path.join(dir, 'socat');
    try {
      await access(candidate, constants.X_OK);
      return candidate;
    } catch {
      // not here
    }
  }
  return undefined;
}

/** Message shown when socat is missing. */
export const SOCAT_MISSING = 'socat is not installed; install it with `apt-get install socat` (Debian/Ubuntu) to run the simulated instruments on pseudo-terminals.';

/** Options of {@link startPtySim}. */
export interface PtySimOptions {
  /** Directory for the pty links. Default: a new temporary directory. */
  dir?: string;
  /** Rig options (the rig's own binding is unused here). */
  rig?: SimRigOptions;
  /** Seconds to wait for socat to create its links. Default 5 s. */
  startTimeoutS?: number;
}

/** A running pty simulation. */
export interface PtySim {
  /** Paths for the host to open: `<dir>/pressure`, `<dir>/current` and `<dir>/hart`. */
  hostPaths: { pressure: string; current: string; hart: string };
  rig: SimRig;
  /** Closes the device ends, kills socat and waits for it to exit. */
  stop(): Promise<void>;
}

async function waitFor(file: string, timeoutMs: number, child: ChildProcess): Promise<void> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    try {
      await access(file);
      return;
    } catch {
      if (child.exitCode !== null) throw new Error(`socat exited with code ${child.exitCode} before creating ${file}`);
      if (Date.now() > until) throw new Error(`socat did not create ${file} within ${timeoutMs} ms`);
      await new Promise((r) => setTimeout(r, 20));
    }
  }
}

function exited(child: ChildProcess): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve();
  return new Promise((resolve) => child.once('exit', () => resolve()));
}

/** Line settings of each simulated device: the calibrator and meter at 9600 8N1, HART at 1200 8O1 (HCF_SPEC-054, from memory). */
export const PTY_LINE_SETTINGS = {
  pressure: { baudRate: 9600, dataBits: 8, parity: 'none', stopBits: 1 },
  current: { baudRate: 9600, dataBits: 8, parity: 'none', stopBits: 1 },
  hart: { baudRate: 1200, dataBits: 8, parity: 'odd', stopBits: 1 },
} as const;

/** Wires an emulator to the device end of a pty through the real serial binding. */
async function attachDevice(devicePath: string, device: SimDevice, line: (typeof PTY_LINE_SETTINGS)[keyof typeof PTY_LINE_SETTINGS]): Promise<SerialPort> {
  const port = new SerialPort({ path: devicePath, ...line, autoOpen: false });
  await new Promise<void>((resolve, reject) => port.open((error) => (error ? reject(error) : resolve())));
  port.on('error', () => {});
  port.on('data', (chunk: Buffer) => device.receive(Uint8Array.from(chunk)));
  device.connect((data) => {
    if (port.isOpen) port.write(Buffer.from(data));
  });
  port.on('close', () => device.disconnect());
  return port;
}

/**
 * Starts socat pty pairs for the pressure calibrator, the current meter and the HART transmitter
 * and attaches the rig's emulators. Rejects with {@link SOCAT_MISSING} when socat is not installed.
 */
export async function startPtySim(options: PtySimOptions = {}): Promise<PtySim> {
  const socat = await findSocat();
  if (!socat) throw new Error(SOCAT_MISSING);
  const dir = options.dir ?? (await mkdtemp(path.join(os.tmpdir(), 'stillpoint-sim-')));
  await mkdir(dir, { recursive: true });
  const rig = new SimRig(options.rig);
  const children: ChildProcess[] = [];
  const ports: SerialPort[] = [];
  // If this process dies without stop(), do not leave socat running.
  const killOnExit = (): void => {
    for (const child of children) if (child.exitCode === null) child.kill('SIGTERM');
  };
  process.once('exit', killOnExit);
  const stop = async (): Promise<void> => {
    process.off('exit', killOnExit);
    rig.dispose();
    await Promise.all(
      ports.map((p) => new Promise<void>((resolve) => (p.isOpen ? p.close(() => resolve()) : resolve()))),
    );
    for (const child of children) if (child.exitCode === null) child.kill('SIGTERM');
    await Promise.all(children.map(exited));
  };
  try {
    const hostPaths = { pressure: path.join(dir, 'pressure'), current: path.join(dir, 'current'), hart: path.join(dir, 'hart') };
    for (const [name, device] of [
      ['pressure', rig.calibrator],
      ['current', rig.meter],
      ['hart', rig.hart],
    ] as const) {
      const host = hostPaths[name];
      const deviceEnd = path.join(dir, `${name}-device`);
      const child = spawn(socat, ['-d', '-d', `pty,raw,echo=0,link=${deviceEnd}`, `pty,raw,echo=0,link=${host}`], {
        stdio: ['ignore', 'ignore', 'pipe'],
      });
      child.stderr?.resume();
      children.push(child);
      await waitFor(deviceEnd, (options.startTimeoutS ?? 5) * 1000, child);
      await waitFor(host, (options.startTimeoutS ?? 5) * 1000, child);
      ports.push(await attachDevice(deviceEnd, device, PTY_LINE_SETTINGS[name]));
    }
    return { hostPaths, rig, stop };
  } catch (error) {
    await stop();
    throw error;
  }
}
