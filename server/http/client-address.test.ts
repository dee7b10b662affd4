import type http from 'node:http';
import { Socket } from 'node:net';
import express from 'express';
import { describe, expect, it } from 'vitest';
import { addressKey, clientAddressOf } from './client-address';

/** An upgrade request as the HTTP server hands it over: headers and the peer's socket. */
function upgradeFrom(remoteAddress: string, headers: http.IncomingHttpHeaders = {}): http.IncomingMessage {
  const socket = new Socket();
  Object.defineProperty(socket, 'remoteAddress', { value: remoteAddress });
  return { headers, socket } as unknown as http.IncomingMessage;
}

function appTrusting(trust: boolean | number | string) {
  const app = express();
  app.set('trust proxy', trust);
  return app;
}

describe('client address of a socket upgrade', () => {
  it('is the peer address, whatever X-Forwarded-For says, when no proxy is trusted (TRUST_PROXY unset)', () => {
    const of = clientAddressOf(appTrusting(false));
    expect(of(upgradeFrom('127.0.0.1', { 'x-forwarded-for': '203.0.113.9' }))).toBe('127.0.0.1');
    expect(of(upgradeFrom('198.51.100.7', { 'x-forwarded-for': '203.0.113.1' }))).toBe('198.51.100.7');
  });

  it('takes X-Forwarded-For only from a trusted proxy, as req.ip does', () => {
    const of = clientAddressOf(appTrusting('loopback'));
    expect(of(upgradeFrom('127.0.0.1', { 'x-forwarded-for': '203.0.113.9' }))).toBe('203.0.113.9');
    // Not from a trusted proxy: the header is the peer's own claim and is ignored.
    expect(of(upgradeFrom('198.51.100.7', { 'x-forwarded-for': '203.0.113.9' }))).toBe('198.51.100.7');
  });

  it('is keyed by /56 for IPv6, as the sign-in throttle does, and not at all for a peer on this host', () => {
    expect(addressKey('2001:db8:1:2:3::1')).toBe(addressKey('2001:db8:1:2:ffff::9'));
    expect(addressKey('2001:db8:1:2:3::1')).not.toBe(addressKey('2001:db8:1:3400::1'));
    expect(addressKey('203.0.113.9')).toBe('203.0.113.9');
    for (const local of ['127.0.0.1', '127.3.4.5', '::1', '::ffff:127.0.0.1']) expect(addressKey(local)).toBeUndefined();
    expect(addressKey('::ffff:203.0.113.9')).toBeDefined();
  });
});
