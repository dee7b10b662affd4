import { randomBytes } from 'node:crypto';
import fs from 'node:fs';
import http from 'node:http';
import path from 'node:path';
import type { AddressInfo, Socket } from 'node:net';
import type { RequestHandler } from 'express';
import type { Logger } from 'pino';
import { createApp } from './app';
import { openDatabase, type Database } from './db/client';
import type { Env } from './env';
import { benchRoutes } from './http/routes/bench/bench.routes';
import { runRoutes } from './http/routes/runs/runs.routes';
import { simRoutes } from './http/routes/sim/sim.routes';
import { createServices, type Services } from './services';
import { createBenchService, journalDirOf, type BenchService, type BenchServiceOptions } from './services/bench.service';
import { seedDemo } from './services/demo-seed.service';
import { createRunService, type RunService } from './services/run.service';
import { attachStreamServer, type StreamServer } from './ws/stream-server';

export interface BootOptions {
  env: Env;
  logger: Logger;
  /** Use an in-memory PGlite (tests) instead of DATA_DIR. Ignored when DATABASE_URL is set. */
  memory?: boolean;
  devMiddleware?: RequestHandler;
  /** Sample journal directory in memory mode (tests); without it an in-memory server keeps no journal. */
  journalDir?: string;
  /** Bench runtime overrides (bench figures, special set-ups). */
  bench?: Partial<Omit<BenchServiceOptions, 'logger'>>;
}

export interface Running {
  server: http.Server;
  url: string;
  database: Database;
  services: Services;
  bench: BenchService;
  runs: RunService;
  stream: StreamServer;
  close(): Promise<void>;
}

/** Session-signing secret: SESSION_SECRET, or one generated once into the data directory. */
function loadSecret(env: Env, memory: boolean): Uint8Array {
  if (env.SESSION_SECRET) return new TextEncoder().encode(env.SESSION_SECRET);
  if (memory) return randomBytes(32);
  const file = path.join(env.DATA_DIR, 'session-secret');
  if (!fs.existsSync(file)) {
    fs.mkdirSync(env.DATA_DIR, { recursive: true });
    fs.writeFileSync(file, randomBytes(48).toString('base64url'), { mode: 0o600, flag: 'wx' });
  }
  return new TextEncoder().encode(fs.readFileSync(file, 'utf8').trim());
}

/** Serial ports of the local bench with BENCH=serial (site settings may name them too). */
function serialPaths(): { pressure: string; current: string } | undefined {
  const pressure = process.env.BENCH_PRESSURE_PORT;
  const current = process.env.BENCH_CURRENT_PORT;
  return pressure && current ? { pressure, current } : undefined;
}

/**
 * Composition: db → services → seed → bench runtime → app → listen → WebSocket stream. Returns a
 * handle that closes it all in reverse: stream, HTTP, bench (flush writer, sync journal), db.
 */
export async function boot(opts: BootOptions): Promise<Running> {
  const { env, logger } = opts;
  const memory = !!opts.memory && !env.DATABASE_URL;
  const database = await openDatabase(env.DATABASE_URL ? { databaseUrl: env.DATABASE_URL } : memory ? {} : { dataDir: env.DATA_DIR });
  let benchToStop: BenchService | undefined;
  try {
    const services = createServices(database, loadSecret(env, memory));
    if (env.SEED_DEMO === '1' && (await seedDemo(database.db, services.audit, env.DEMO_PASSWORD))) {
      logger.info('seeded the demo site');
    }
    const allowedOrigins = env.ALLOWED_ORIGINS.split(',').map((s) => s.trim()).filter(Boolean);
    const bench = createBenchService(database.db, {
      mode: env.BENCH,
      logger,
      journalDir: memory ? opts.journalDir : journalDirOf(env.DATA_DIR),
      serialPaths: serialPaths(),
      ...opts.bench,
    });
    benchToStop = bench;
    await bench.start();
    const runs = createRunService(database.db, services.audit, services.jobs, bench, { envHoldSeconds: env.HOLD_SECONDS, logger });
    const restored = await runs.restoreActive();
    if (restored) logger.info({ restored }, 'restored active runs');
    const app = createApp({
      services,
      logger,
      health: () => ({ ok: true, db: database.kind, bench: env.BENCH }),
      allowedOrigins,
      clientDir: path.resolve(import.meta.dirname, '../dist'),
      devMiddleware: opts.devMiddleware,
      extraRoutes: [runRoutes(runs), benchRoutes(bench), simRoutes(bench)],
    });
    const server = http.createServer(app);
    const sockets = new Set<Socket>();
    server.on('connection', (s) => {
      sockets.add(s);
      s.on('close', () => sockets.delete(s));
    });
    await new Promise<void>((resolve, reject) => {
      server.once('error', reject);
      server.listen(env.PORT, env.HOST, () => resolve());
    });
    const stream = attachStreamServer({ server, auth: services.auth, bench, logger, allowedOrigins });
    const port = (server.address() as AddressInfo).port;
    let closing: Promise<void> | undefined;
    return {
      server,
      url: `http://127.0.0.1:${port}`,
      database,
      services,
      bench,
      runs,
      stream,
      close: () =>
        (closing ??= (async () => {
          await stream.close();
          await new Promise<void>((resolve) => {
            server.close(() => resolve());
            for (const s of sockets) s.destroy();
          });
          await bench.stop();
          await runs.settle();
          await database.close();
        })()),
    };
  } catch (e) {
    await benchToStop?.stop().catch(() => {});
    await database.close();
    throw e;
  }
}
