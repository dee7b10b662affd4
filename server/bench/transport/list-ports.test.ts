import { mkdtemp, mkdir, symlink, writeFile } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import type { BindingInterface } from './binding-types';
import { defaultBinding } from './default-binding';
import { listPorts } from './list-ports';

function failingBinding(message: string): BindingInterface {
  return {
    list: () => Promise.reject(Object.assign(new Error(message), { code: 'ENOENT' })),
    open: () => Promise.reject(new Error('not used')),
  };
}

describe('listPorts', () => {
  it('falls back to scanning by-id, ttyUSB and ttyACM when the binding cannot list', async () => {
    const dev = await mkdtemp(path.join(os.tmpdir(), 'stillpoint-dev-'));
    await mkdir(path.join(dev, 'serial', 'by-id'), { recursive: true });
    for (const name of ['ttyUSB0', 'ttyUSB1', 'ttyACM0', 'ttyS0', 'null']) await writeFile(path.join(dev, name), '');
    await symlink(path.join(dev, 'ttyUSB1'), path.join(dev, 'serial', 'by-id', 'usb-Sim_Meter_1234-if00-port0'));
    const reasons: string[] = [];
    const ports = await listPorts({ binding: failingBinding('spawn udevadm ENOENT'), devDir: dev, onFallback: (e) => reasons.push(e.message) });
    expect(reasons).toEqual(['spawn udevadm ENOENT']);
    expect(ports.map((p) => path.relative(dev, p.path))).toEqual(['serial/by-id/usb-Sim_Meter_1234-if00-port0', 'ttyACM0', 'ttyUSB0']);
    expect(ports.every((p) => p.source === 'scan')).toBe(true);
    expect(ports[0]?.pnpId).toBe('usb-Sim_Meter_1234-if00-port0');
  });

  it('returns an empty list, not an error, when nothing can be read', async () => {
    await expect(listPorts({ binding: failingBinding('boom'), devDir: '/nonexistent-stillpoint' })).resolves.toEqual([]);
  });

  it('does not crash with the native binding on this host, with or without udevadm', async () => {
    const ports = await listPorts({ binding: defaultBinding() });
    expect(Array.isArray(ports)).toBe(true);
  });
});
