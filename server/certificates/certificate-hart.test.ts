import { spawnSync } from 'node:child_process';
import fs from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import type { FrozenHart } from '../../shared/schemas/hart-job';
import { renderCertificate } from './certificate-pdf';
import { sampleCertificate } from '../../tests/fixtures/sample-certificate';

const config = { unit: 'inH2O@68F', unitCode: 1, lrv: 0, urv: 100, transferFunctionCode: 0, transferFunction: 'linear', dampingS: 0.4, writeProtect: false, alarmSelection: 0 };
const identity = { manufacturerId: 0x6001, expandedDeviceType: 0x3a51, deviceId: 0x00b2c7, universalRevision: 7, deviceRevision: 1, softwareRevision: 3, tag: 'FT-101', descriptor: 'SIM DP FLOW' };
const write = (command: number, name: string, value: string | null, at: string) => ({ command, name, value, request: 'FF FF 82', reply: 'FF FF 86', responseCode: 0, outcome: 'ok' as const, error: null, at, by: 'u1', byName: 'Tess Tech', step: 'output-trim' });
const hart: FrozenHart = {
  asFound: { identity, config, at: '2026-12-03T05:00:00.000Z' },
  asLeft: { identity, config: { ...config, dampingS: 0.5 }, at: '2026-12-03T05:30:00.000Z' },
  mismatches: [],
  resolution: { kind: 'register-corrected', reason: 'DCS roots the signal', mismatches: [{ field: 'transfer-function', device: 'linear', register: 'square root in the transmitter', message: 'Transfer function: the device is set to linear, the register says square root in the transmitter' }], by: 'u1', byName: 'Tess Tech', at: '2026-12-03T05:01:00.000Z' },
  writes: [write(40, 'enter/exit fixed current mode', '4 mA', '2026-12-03T05:10:00.000Z'), write(45, 'trim loop current zero', '4.0500 mA', '2026-12-03T05:10:05.000Z'), write(46, 'trim loop current gain', '20.0500 mA', '2026-12-03T05:10:12.000Z')],
  trims: [{ id: 't1', kind: 'output-trim', status: 'done', step: 'trimmed and verified; fixed current left', fixedMa: null, readings: [{ stage: 'verify', fixedMa: 12, meterMa: 12.0004, errorMa: 0.0004 }], error: null, startedAt: '2026-12-03T05:10:00.000Z', endedAt: '2026-12-03T05:11:00.000Z', by: 'u1', byName: 'Tess Tech', confirmed: ['loop in manual', 'operators informed'] }],
};

describe('certificate HART section', () => {
  it('shows the device identity, configuration as found and as left, and the commands sent with value and response', async () => {
    const pdf = await renderCertificate({ ...sampleCertificate(), hart });
    const dir = await fs.mkdtemp(path.join(os.tmpdir(), 'cert-hart-'));
    const file = path.join(dir, 'c.pdf');
    await fs.writeFile(file, pdf);
    const r = spawnSync('pdftotext', ['-layout', file, '-'], { encoding: 'utf8' });
    await fs.rm(dir, { recursive: true, force: true });
    expect(r.status).toBe(0);
    const text = r.stdout.replace(/\s+/g, ' ');
    for (const s of ['HART device', '0x00B2C7', '0x3A51', '0x6001', 'SIM DP FLOW', 'As found', 'As left', '0.40 s', '0.50 s', 'The register was corrected to the device', 'DCS roots the signal', 'trim loop current zero', '4.0500 mA', '20.0500 mA', '12 mA read 12.0004 mA']) {
      expect(text).toContain(s);
    }
    expect(text).toMatch(/\b45\b/);
    expect(text).toMatch(/\b46\b/);
  });
});
