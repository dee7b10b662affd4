import { isIP } from 'node:net';
import type { NextFunction, Request, Response } from 'express';
import { AppError } from '../../errors';

/** Splits a Host header value into its name (brackets kept off IPv6 literals) and port. */
function splitHost(host: string): { name: string; port: string } {
  const m = /^\[([^\]]+)\](?::(\d+))?$/.exec(host) ?? /^([^:]+)(?::(\d+))?$/.exec(host);
  return m ? { name: m[1]!.toLowerCase(), port: m[2] ?? '' } : { name: '', port: '' };
}

/**
 * DNS-rebinding guard: the Host header must name this server. Accepted: the host of every origin
 * in ALLOWED_ORIGINS, `localhost` and names under `.localhost`, and IP literals (a page can only
 * send a Host it resolved through DNS, so an address typed as such cannot be a rebound name; the
 * same defaults as Vite's `server.allowedHosts`). Anything else is refused with 421 before any work.
 */
export function allowedHost(allowedOrigins: string[]) {
  const ok = hostChecker(allowedOrigins);
  return (req: Request, _res: Response, next: NextFunction) => {
    if (ok(req.headers.host)) return next();
    next(new AppError(421, 'wrong_host', 'This server does not answer to that host name; add its origin to ALLOWED_ORIGINS'));
  };
}

/** The check of {@link allowedHost} as a function of a Host header value (for the WebSocket upgrade too). */
export function hostChecker(allowedOrigins: string[]): (hostHeader: string | undefined) => boolean {
  const configured = new Set<string>();
  for (const o of allowedOrigins) {
    try {
      const u = new URL(o);
      configured.add(u.host.toLowerCase());
      // The default port may be sent with or without its number.
      if (!u.port) configured.add(`${u.hostname.toLowerCase()}:${u.protocol === 'https:' ? 443 : 80}`);
    } catch {
      /* an unparseable origin allows nothing */
    }
  }
  return (hostHeader) => {
    const host = (hostHeader ?? '').trim();
    const { name } = splitHost(host);
    return !!name && (configured.has(host.toLowerCase()) || name === 'localhost' || name.endsWith('.localhost') || isIP(name) !== 0);
  };
}
