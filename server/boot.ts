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
import { createServices, type Services } from './services';
import { seedDemo } from './services/demo-seed.service';

export interface BootOptions {
  env: Env;
  logger: Logger;
  /** Use an in-memory PGlite (tests) instead of DATA_DIR. Ignored when DATABASE_URL is set. */
  memory?: boolean;
  devMiddleware?: RequestHandler;
}

export interface Running {
  server: http.Server;
  url: string;
  database: Database;
  services: Services;
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

/** Composition: db → services → seed → app → listen. Returns a handle that closes it all in order. */
export async function boot(opts: BootOptions): Promise<Running> {
  const { env, logger } = opts;
  const memory = !!opts.memory && !env.DATABASE_URL;
  const database = await openDatabase(env.DATABASE_URL ? { databaseUrl: env.DATABASE_URL } : memory ? {} : { dataDir: env.DATA_DIR });
  try {
    const services = createServices(database, loadSecret(env, memory));
    if (env.SEED_DEMO === '1' && (await seedDemo(database.db, services.audit, env.DEMO_PASSWORD))) {
      logger.info('seeded the demo site');
    }
    const app = createApp({
      services,
      logger,
      health: () => ({ ok: true, db: database.kind, bench: env.BENCH }),
      allowedOrigins: env.ALLOWED_ORIGINS.split(',').map((s) => s.trim()).filter(Boolean),
      clientDir: path.resolve(import.meta.dirname, '../dist'),
      devMiddleware: opts.devMiddleware,
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
    const port = (server.address() as AddressInfo).port;
    let closing: Promise<void> | undefined;
    return {
      server,
      url: `http://127.0.0.1:${port}`,
      database,
      services,
      close: () =>
        (closing ??= (async () => {
          await new Promise<void>((resolve) => {
            server.close(() => resolve());
            for (const s of sockets) s.destroy();
          });
          await database.close();
        })()),
    };
  } catch (e) {
    await database.close();
    throw e;
  }
}
