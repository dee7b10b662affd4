import { cleanup, render, screen } from '@testing-library/react';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { BenchStatusSchema } from '../api/get-bench';
import { HartModemPanel } from './hart-modem-panel';

/** The clock the panel reads (`… s ago`), fixed: a render late by a second on a loaded machine must not change the text. */
const NOW = Date.parse('2026-12-03T10:00:00Z');
beforeEach(() => {
  vi.useFakeTimers({ toFake: ['Date'] });
  vi.setSystemTime(NOW);
});
afterEach(() => {
  cleanup();
  vi.useRealTimers();
});

/** The HART part of a GET /api/bench reply as the server sends it (server/bench/hart-modem.ts). */
const hart = {
  path: '/dev/sim-hart',
  connected: true,
  state: 'connected',
  modem: 'rts',
  baudRate: 1200,
  protocol: 'HART (FSK modem, 8O1)',
  device: { deviceId: 0x00b2c7, expandedDeviceType: 0x3a51, universalRevision: 7 },
  loopCurrentFixed: true,
  deviceStatus: ['configuration changed', 'loop current fixed'],
  lastCommand: { command: 45, name: 'trim loop current zero', at: NOW - 5_000, outcome: 'error', responseCode: 7 },
  lastError: { code: 'hart-write-protected', message: 'HART command 45 (trim loop current zero) on /dev/sim-hart: the device answered "in write protect mode" (response code 7)', at: NOW - 5_000 },
  stats: { sent: 12, replied: 11, retries: 1, timeouts: 1, checksumErrors: 0, busy: 0, communicationErrors: 0, garbageBytes: 0, transactions: 11, errors: 1 },
};

describe('HartModemPanel', () => {
  it('parses as part of GET /api/bench and shows the port, modem, device, last command, counters and the error', () => {
    const status = BenchStatusSchema.parse({ mode: 'sim', benchId: 'b', latestSeq: 0, benches: [{ benchId: 'b', devices: {}, local: { pressure: { path: 'p', connected: true, state: 'connected' }, current: { path: 'c', connected: true, state: 'connected' }, hart } }] });
    const parsed = status.benches[0]?.local?.hart;
    expect(parsed?.modem).toBe('rts');
    render(<HartModemPanel hart={parsed!} />);
    expect(screen.getByText('/dev/sim-hart')).toBeTruthy();
    expect(screen.getByText('RS-232, carrier keyed by RTS')).toBeTruthy();
    expect(screen.getByText('1200 bit/s 8O1')).toBeTruthy();
    expect(screen.getByTestId('hart-device').textContent).toBe('device 00B2C7 · type 3A51 · HART 7');
    expect(screen.getByTestId('hart-last-command').textContent).toBe('command 45 (trim loop current zero), failed 5 s ago');
    expect(screen.getByText('Loop current fixed')).toBeTruthy();
    expect(screen.getByText('configuration changed, loop current fixed')).toBeTruthy();
    expect(screen.getByTestId('hart-last-error').textContent).toContain('in write protect mode');
    expect(screen.getByTestId('device-hart').getAttribute('data-connected')).toBe('true');
  });

  it('says when no transmitter has answered yet', () => {
    render(<HartModemPanel hart={{ ...hart, modem: 'usb', device: null, loopCurrentFixed: false, deviceStatus: [], lastCommand: null, lastError: null } as never} />);
    expect(screen.getByTestId('hart-device').textContent).toBe('not found yet');
    expect(screen.getByText('nothing reported')).toBeTruthy();
    expect(screen.queryByText('Loop current fixed')).toBeNull();
  });
});
