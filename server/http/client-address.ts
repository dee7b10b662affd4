import type http from 'node:http';
import { isIP } from 'node:net';
import type { Express, Request } from 'express';
import { ipKeyGenerator } from 'express-rate-limit';

/**
 * The client address of a request that does not pass through the app (a socket upgrade), derived
 * exactly as the app derives `req.ip` (Express `trust proxy`, i.e. TRUST_PROXY: X-Forwarded-For is
 * believed only from the configured proxies).
 */
export function clientAddressOf(app: Express): (req: http.IncomingMessage) => string {
  return (req) => {
    // The app's request prototype gives `ip` through its own trust setting; only headers and socket are read.
    const view = Object.create(app.request, { headers: { value: req.headers }, socket: { value: req.socket } }) as Request;
    return view.ip ?? req.socket.remoteAddress ?? '';
  };
}

/** 127.0.0.0/8, ::1 and IPv4-mapped loopback. */
export function isLoopback(ip: string): boolean {
  const v4 = ip.startsWith('::ffff:') ? ip.slice(7) : ip;
  return (isIP(v4) === 4 && v4.startsWith('127.')) || ip === '::1';
}

/**
 * The key a client address is limited under, as the sign-in throttle keys it (an IPv6 address by
 * its /56 network, so one host cannot rotate through its own prefix); undefined for a peer on this
 * host, which is not limited by address: it is a local program or a reverse proxy that every
 * client comes through while TRUST_PROXY is unset (set it, and each client has its own address).
 */
export function addressKey(ip: string): string | undefined {
  return isLoopback(ip) ? undefined : ipKeyGenerator(ip);
}
