import path from 'node:path';
import fs from 'node:fs';
import express, { type RequestHandler } from 'express';
import cookieParser from 'cookie-parser';
import helmet from 'helmet';
import type { Logger } from 'pino';
import { AppError, notFound } from './errors';
import { allowedHost } from './http/middleware/allowed-host';
import { loadSession } from './http/middleware/auth';
import { errorHandler } from './http/middleware/error-handler';
import { sameOrigin } from './http/middleware/same-origin';
import { neverShed, shedLoad } from './http/middleware/shed-load';
import type { RouteSpec, RouteTable } from './http/route-table';
import { auditRoutes } from './http/routes/audit/audit.routes';
import { authRoutes } from './http/routes/auth/auth.routes';
import { calcRoutes } from './http/routes/calc/calc.routes';
import { jobRoutes } from './http/routes/jobs/jobs.routes';
import { certificateRoutes } from './http/routes/records/certificate.routes';
import { queueRoutes, recordsRoutes } from './http/routes/records/records.routes';
import { siteRoutes } from './http/routes/site/site.routes';
import { instrumentRoutes, standardRoutes } from './http/routes/registers/registers.routes';
import { reviewRoutes, reviewTraceRoutes } from './http/routes/review/review.routes';
import { userRoutes } from './http/routes/users/users.routes';
import type { Services } from './services';

/** What `GET /api/health` answers at least. */
export interface HealthLike {
  ok: boolean;
  db: 'pglite' | 'postgres';
  bench: 'sim' | 'serial';
}

export interface AppDeps {
  services: Services;
  logger: Logger;
  /** The health report; `ok: false` answers 503 (services/health.service.ts). */
  health: () => HealthLike | Promise<HealthLike>;
  allowedOrigins: string[];
  /** Directory of the built client to serve (production); omitted in development and API tests. */
  clientDir?: string;
  /** Vite's middleware in development. */
  devMiddleware?: RequestHandler;
  /** Extra route tables (bench, runs, ...) mounted after the core ones. */
  extraRoutes?: RouteTable[];
  /** Express `trust proxy` (TRUST_PROXY); default false: forwarding headers are not believed. */
  trustProxy?: boolean | number | string;
  /** Requests in flight before new ones are shed with 503 (MAX_IN_FLIGHT); 0 or unset: no shedding. */
  maxInFlight?: number;
  /** Latency the served requests are held to by adapting the in-flight limit (SHED_TARGET_MS); 0 or unset: a fixed limit. */
  shedTargetMs?: number;
  /** Floor of the adaptive in-flight limit (SHED_MIN_IN_FLIGHT). */
  shedMinInFlight?: number;
}

const strictUtf8 = new TextDecoder('utf-8', { fatal: true });

/** Builds the Express app from its dependencies; it does not listen. */
export function createApp(deps: AppDeps) {
  const app = express();
  app.disable('x-powered-by');
  app.set('trust proxy', deps.trustProxy ?? false);
  // First, before any work: shed load past the in-flight limit, then refuse foreign Host headers.
  const shedder = shedLoad({ maxInFlight: deps.maxInFlight ?? 0, targetMs: deps.shedTargetMs ?? 0, ...(deps.shedMinInFlight ? { minInFlight: deps.shedMinInFlight } : {}), exempt: neverShed });
  app.locals.shedding = shedder.stats;
  app.use(shedder);
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          defaultSrc: ["'self'"],
          scriptSrc: ["'self'"],
          styleSrc: ["'self'", "'unsafe-inline'"],
          imgSrc: ["'self'", 'data:', 'blob:'],
          fontSrc: ["'self'", 'data:'],
          connectSrc: ["'self'"],
          upgradeInsecureRequests: null,
        },
      },
      // The app is often served over plain HTTP on a plant LAN; HSTS would lock that out.
      strictTransportSecurity: false,
    }),
  );
  app.use(allowedHost(deps.allowedOrigins));
  app.use(
    express.json({
      limit: '1mb',
      // Invalid UTF-8 would be decoded into U+FFFD silently; refuse it instead (every JSON route).
      verify: (_req, _res, buf) => {
        try {
          strictUtf8.decode(buf);
        } catch {
          throw new AppError(415, 'unsupported_media', 'The request body is not valid UTF-8');
        }
      },
    }),
  );
  app.use(cookieParser());
  app.use('/api', sameOrigin(deps.allowedOrigins));
  app.use('/api', loadSession(deps.services.auth));

  const tables: RouteTable[] = [
    authRoutes(deps.services.auth),
    userRoutes(deps.services.users),
    instrumentRoutes(deps.services.registers, { csv: deps.services.csv, drift: deps.services.drift }),
    standardRoutes(deps.services.registers, { csv: deps.services.csv }),
    jobRoutes(deps.services.jobs),
    reviewRoutes(deps.services.review),
    reviewTraceRoutes(deps.services.review),
    recordsRoutes(deps.services.review),
    certificateRoutes(deps.services.certificates),
    queueRoutes(deps.services.drift),
    auditRoutes(deps.services.audit),
    siteRoutes(deps.services.site),
    calcRoutes(),
    ...(deps.extraRoutes ?? []),
  ];
  const routes: RouteSpec[] = [{ method: 'get', path: '/api/health', action: null }];
  app.get('/api/health', async (_req, res) => {
    const h = await deps.health();
    res.status(h.ok ? 200 : 503).set('Cache-Control', 'no-store').json(h);
  });
  for (const t of tables) {
    app.use(t.base, t.router);
    routes.push(...t.specs);
  }
  app.locals.routes = routes;
  app.use('/api', (_req, _res, next) => next(notFound('No such API route')));

  if (deps.devMiddleware) app.use(deps.devMiddleware);
  else if (deps.clientDir && fs.existsSync(path.join(deps.clientDir, 'index.html'))) {
    const dir = deps.clientDir;
    // Source maps are never served (the build makes none; a stale one must not leak the source).
    app.use((req, _res, next) => next(/\.map$/i.test(req.path) ? notFound() : undefined));
    app.use(express.static(dir, { index: false, maxAge: '1h' }));
    // Client-side routes: every other GET gets the app shell.
    app.get(/^(?!\/api\/|\/ws).*/, (_req, res) => {
      res.sendFile(path.join(dir, 'index.html'));
    });
  }
  app.use(errorHandler(deps.logger));
  return app;
}
