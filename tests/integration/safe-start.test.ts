/**
 * Safe by default (issue 14, finding 1): loopback unless HOST is set; the demo users (one shared,
 * documented password) are not seeded on a network address unless SEED_DEMO=1 says so, and then a
 * warning names the password; forwarding headers believed only with TRUST_PROXY.
 */
import { Writable } from 'node:stream';
import pino from 'pino';
import type { AddressInfo } from 'node:net';
import { afterAll, describe, expect, it } from 'vitest';
import { boot, type Running } from '../../server/boot';
import { demoSeedPolicy, listenHost, parseEnv, trustProxySetting } from '../../server/env';
import { DEMO_PASSWORD, demoEmail } from '../helpers/test-server';

const base = { NODE_ENV: 'test', PORT: '0', LOG_LEVEL: 'silent', DATA_DIR: '.tmp/unused' };
let running: Running | undefined;
afterAll(async () => {
  await running?.close();
});

describe('environment defaults', () => {
  it('listens on loopback unless HOST is set, and believes no proxy unless TRUST_PROXY is set', () => {
    expect(listenHost(parseEnv(base))).toBe('127.0.0.1');
    expect(listenHost(parseEnv({ ...base, HOST: '0.0.0.0' }))).toBe('0.0.0.0');
    expect(trustProxySetting(parseEnv(base))).toBe(false);
    expect(trustProxySetting(parseEnv({ ...base, TRUST_PROXY: 'loopback' }))).toBe('loopback');
    expect(trustProxySetting(parseEnv({ ...base, TRUST_PROXY: '1' }))).toBe(1);
  });

  it('seeds the demo on loopback, refuses on a network HOST unless SEED_DEMO=1, and never with SEED_DEMO=0', () => {
    expect(demoSeedPolicy(parseEnv(base))).toBe('seed');
    expect(demoSeedPolicy(parseEnv({ ...base, HOST: '::1' }))).toBe('seed');
    expect(demoSeedPolicy(parseEnv({ ...base, HOST: '0.0.0.0' }))).toBe('refuse');
    expect(demoSeedPolicy(parseEnv({ ...base, HOST: '192.168.10.5' }))).toBe('refuse');
    expect(demoSeedPolicy(parseEnv({ ...base, HOST: '0.0.0.0', SEED_DEMO: '1' }))).toBe('seed-exposed');
    expect(demoSeedPolicy(parseEnv({ ...base, HOST: '0.0.0.0', SEED_DEMO: '0' }))).toBe('skip');
  });
});

describe('booting', () => {
  it('refuses to seed the demo users on a network address without SEED_DEMO=1', async () => {
    const env = parseEnv({ ...base, HOST: '0.0.0.0' });
    await expect(boot({ env, logger: pino({ level: 'silent' }), memory: true })).rejects.toThrow(/SEED_DEMO=1/);
  }, 240_000);

  it('with SEED_DEMO=1 on 0.0.0.0 seeds, warns naming the demo password, and with TRUST_PROXY believes X-Forwarded-Proto', async () => {
    const lines: string[] = [];
    const sink = new Writable({
      write(chunk, _enc, cb) {
        lines.push(String(chunk));
        cb();
      },
    });
    const env = parseEnv({ ...base, HOST: '0.0.0.0', SEED_DEMO: '1', TRUST_PROXY: 'loopback', LOG_LEVEL: 'warn' });
    running = await boot({ env, logger: pino({ level: 'warn' }, sink), memory: true });
    expect((running.server.address() as AddressInfo).address).toBe('0.0.0.0');
    const warning = lines.map((l) => JSON.parse(l) as { level: number; msg: string }).find((l) => l.msg.includes('SEED_DEMO=1'));
    expect(warning?.level).toBe(40);
    expect(warning?.msg).toContain(DEMO_PASSWORD);
    const login = (headers: Record<string, string>) =>
      fetch(`${running!.url}/api/auth/login`, {
        method: 'POST',
        headers: { 'content-type': 'application/json', origin: running!.url, ...headers },
        body: JSON.stringify({ email: demoEmail('lead'), password: DEMO_PASSWORD }),
      });
    const viaProxy = await login({ 'x-forwarded-proto': 'https', origin: running.url.replace('http:', 'https:') });
    expect(viaProxy.status).toBe(200);
    expect(viaProxy.headers.getSetCookie().find((c) => c.startsWith('sp_session='))).toMatch(/;\s*Secure/i);
  }, 240_000);
});
