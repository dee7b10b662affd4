import type http from 'node:http';
import type { Express, Request } from 'express';
import { ipKeyGenerator } from 'express-rate-limit';

/**
 * The client address of a request that does not pass through the app (a socket upgrade), derived
 * exactly as the app derives `req.ip` (Express `trust proxy`, i.e. TRUST_PROXY: X-Forwarded-For is
 * believed only from the configured proxies), then keyed as the sign-in throttle keys it (an IPv6
 * address by its /56 network, so one host cannot rotate through its own prefix).
 */
export function clientAddressOf(app: Express): (req: http.IncomingMessage) => string {
  return (req) => {
    // The app's request prototype gives `ip` through its own trust setting; only headers and socket are read.
    const view = Object.create(app.request, { headers: { value: req.headers }, socket: { value: req.socket } }) as Request;
    return ipKeyGenerator(view.ip ?? req.socket.remoteAddress ?? '');
  };
}
