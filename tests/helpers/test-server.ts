import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import pg from 'pg';
import { boot, type BootOptions, type Running } from '../../server/boot';
import { demoSeedPolicy, parseEnv } from '../../server/env';
import { createLogger } from '../../server/logger';
import { demoTemplate, TEST_HASH_COST } from './db-template';

export const DEMO_PASSWORD = 'stillpoint-demo';
export const demoEmail = (role: 'tech' | 'tech2' | 'lead' | 'admin' | 'auditor') => `${role}@stillpoint-demo.test`;

/**
 * Where the integration tests keep data: in-memory PGlite through the real migrations, or,
 * when TEST_DATABASE_URL is set (a postgres:// URL of a server the tests may create
 * databases on), a fresh database on that server for each booted app.
 */
export async function freshPostgres(prefix = 'sp_test'): Promise<{ url: string; drop(): Promise<void> } | undefined> {
  const admin = process.env.TEST_DATABASE_URL;
  if (!admin) return undefined;
  const name = `${prefix}_${Date.now().toString(36)}_${Math.random().toString(36).slice(2, 8)}`;
  const c = new pg.Client({ connectionString: admin });
  await c.connect();
  await c.query(`CREATE DATABASE ${name}`);
  await c.end();
  const u = new URL(admin);
  u.pathname = `/${name}`;
  return {
    url: u.toString(),
    drop: async () => {
      const d = new pg.Client({ connectionString: admin });
      await d.connect();
      await d.query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`);
      await d.end();
    },
  };
}

export interface TestServer extends Running {
  url: string;
  close(): Promise<void>;
}

/** Boots the real app on an ephemeral port with the demo site seeded. */
export async function startTestServer(opts: { env?: Record<string, string>; boot?: Partial<Pick<BootOptions, 'wrapRunRepository' | 'runStoreRetry' | 'logger'>> } = {}): Promise<TestServer> {
  const pgdb = await freshPostgres();
  // A directory of its own for each server: on PostgreSQL it holds the lock, the sample journal and
  // the seq reservation, which two servers (two test files at once, or an earlier run) must not share.
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'sp-test-'));
  const env = parseEnv({
    NODE_ENV: 'test',
    PORT: '0',
    HOST: '127.0.0.1',
    LOG_LEVEL: 'silent',
    // New hashes (invites, resets, password changes) at bcrypt's minimum cost, like the template's.
    PASSWORD_HASH_COST: String(TEST_HASH_COST),
    // A loaded two-core machine (every lane of `npm test` at once, load average near 20) has kept
    // the database from answering health's query within the default 2 s: a 503 that says more
    // about the test machine than the server. The health verdicts themselves are unit-tested with
    // an injected timeout (server/services/health.service.test.ts).
    HEALTH_DB_TIMEOUT_MS: '20000',
    DATA_DIR: dataDir,
    ...(pgdb ? { DATABASE_URL: pgdb.url } : {}),
    ...opts.env,
  });
  const policy = demoSeedPolicy(env);
  const template = !pgdb && (policy === 'seed' || policy === 'seed-exposed') ? await demoTemplate(env.DEMO_PASSWORD) : undefined;
  const running = await boot({ env, logger: createLogger(env.LOG_LEVEL), memory: true, ...(template ? { template } : {}), ...opts.boot });
  return {
    ...running,
    close: async () => {
      await running.close();
      await pgdb?.drop();
      fs.rmSync(dataDir, { recursive: true, force: true });
    },
  };
}

/** A tiny cookie-keeping JSON client for API tests, sending our Origin like a browser. */
export class ApiClient {
  cookie = '';
  constructor(readonly base: string) {}

  async req(method: string, path: string, body?: unknown, headers: Record<string, string> = {}) {
    const res = await fetch(this.base + path, {
      method,
      headers: {
        ...(body !== undefined ? { 'content-type': 'application/json' } : {}),
        ...(method !== 'GET' ? { origin: this.base } : {}),
        ...(this.cookie ? { cookie: this.cookie } : {}),
        ...headers,
      },
      body: body === undefined ? undefined : typeof body === 'string' ? body : JSON.stringify(body),
    });
    const set = res.headers.getSetCookie();
    for (const c of set) {
      const [pair] = c.split(';');
      if (pair!.startsWith('sp_session=')) this.cookie = pair!.endsWith('=') ? '' : pair!;
    }
    const text = await res.text();
    let json: unknown;
    try {
      json = text ? JSON.parse(text) : undefined;
    } catch {
      json = text;
    }
    return { status: res.status, body: json as any, headers: res.headers }; // eslint-disable-line @typescript-eslint/no-explicit-any
  }
  get = (p: string) => this.req('GET', p);
  post = (p: string, b?: unknown) => this.req('POST', p, b ?? {});

  async login(email: string, password = DEMO_PASSWORD) {
    const r = await this.post('/api/auth/login', { email, password });
    if (r.status !== 200) throw new Error(`login ${email}: ${r.status} ${JSON.stringify(r.body)}`);
    return r.body;
  }
}
