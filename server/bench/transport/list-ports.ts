/**
 * Port discovery that survives hosts without udev (containers, minimal images): the Linux binding
 * lists ports by spawning `udevadm`, which fails with `spawn udevadm ENOENT` there.
 */
import { readdir, realpath } from 'node:fs/promises';
import path from 'node:path';
import type { BindingInterface, PortInfo } from './binding-types';

/** A listed port and where the listing came from. */
export interface ListedPort extends PortInfo {
  /** `'binding'`: the binding's own list; `'scan'`: the `/dev` fallback scan. */
  source: 'binding' | 'scan';
}

/** Options of {@link listPorts}. */
export interface ListPortsOptions {
  /** Binding whose `list()` is tried first. */
  binding: BindingInterface;
  /** Root of the device tree to scan when the binding cannot list. Default `/dev`. */
  devDir?: string;
  /** Told why the binding's list failed, when the fallback scan is used. */
  onFallback?: (error: Error) => void;
}

const SCANNED = /^tty(?:USB|ACM)\d+$/;

/**
 * Lists serial ports. Tries the binding; if that fails (e.g. `spawn udevadm ENOENT`), scans
 * `<devDir>/serial/by-id` (stable names, preferred) and `<devDir>/ttyUSB*`, `<devDir>/ttyACM*`.
 * Never rejects: an unreadable directory simply contributes nothing.
 */
export async function listPorts(options: ListPortsOptions): Promise<ListedPort[]> {
  try {
    const ports = await options.binding.list();
    return ports.map((p) => ({ ...p, source: 'binding' as const }));
  } catch (error) {
    options.onFallback?.(error instanceof Error ? error : new Error(String(error)));
    return scanDevDir(options.devDir ?? '/dev');
  }
}

async function entries(dir: string): Promise<string[]> {
  try {
    return (await readdir(dir)).sort();
  } catch {
    return [];
  }
}

/** The fallback scan of {@link listPorts}, exported for the Bench page's "rescan". */
export async function scanDevDir(devDir: string): Promise<ListedPort[]> {
  const found: ListedPort[] = [];
  const seen = new Set<string>();
  const byIdDir = path.join(devDir, 'serial', 'by-id');
  for (const name of await entries(byIdDir)) {
    const link = path.join(byIdDir, name);
    const target = await realpath(link).catch(() => undefined);
    if (!target || seen.has(target)) continue;
    seen.add(target);
    found.push(scanned(link, name));
  }
  for (const name of await entries(devDir)) {
    if (!SCANNED.test(name)) continue;
    const full = path.join(devDir, name);
    const target = await realpath(full).catch(() => full);
    if (seen.has(target)) continue;
    seen.add(target);
    found.push(scanned(full, undefined));
  }
  return found;
}

function scanned(portPath: string, pnpId: string | undefined): ListedPort {
  return {
    path: portPath,
    manufacturer: undefined,
    serialNumber: undefined,
    pnpId,
    locationId: undefined,
    productId: undefined,
    vendorId: undefined,
    source: 'scan',
  };
}
