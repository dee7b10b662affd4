/**
 * The real server as a child process (`node` on the prebuilt bundle of server/main.ts,
 * tests/helpers/server-bundle.ts), for the proof suites that kill it or measure it from outside: start on a port, wait for health, collect output, and a fresh
 * database on the PostgreSQL server when TEST_DATABASE_URL is set.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import path from 'node:path';
import { seedDataDir } from './db-template';
import { sleep } from './proof-helpers';
import { serverBundle } from './server-bundle';
import { DEMO_PASSWORD, freshPostgres } from './test-server';

export interface ServerProcess {
  child: ChildProcess;
  port: number;
  base: string;
  /** Resolves with the exit code, or -1 when a signal ended it. */
  exited: Promise<number | null>;
  output(): string;
}

/**
 * Starts the production server on loopback with a simulated bench. On PGlite, an empty data
 * directory first gets the migrated, seeded template (tests/helpers/db-template.ts), the database
 * the server's own first start would make; `firstStart: true` leaves it empty for the server to
 * migrate and seed itself. `bundle`: run that server bundle instead of this tree's (a benchmark
 * comparing with another checkout).
 */
export async function startServerProcess(o: { port: number; dataDir: string; databaseUrl?: string; env?: Record<string, string>; firstStart?: boolean; bundle?: string }): Promise<ServerProcess> {
  if (!o.databaseUrl && !o.firstStart && o.env?.SEED_DEMO !== '0' && !fs.existsSync(path.join(o.dataDir, 'pglite'))) await seedDataDir(o.dataDir, o.env?.DEMO_PASSWORD ?? DEMO_PASSWORD);
  const child = spawn(process.execPath, [o.bundle ?? (await serverBundle())], {
    env: {
      ...process.env,
      NODE_ENV: 'production',
      BENCH: 'sim',
      HOLD_SECONDS: '1',
      DATA_DIR: o.dataDir,
      PORT: String(o.port),
      HOST: '127.0.0.1',
      LOG_LEVEL: 'warn',
      DATABASE_URL: o.databaseUrl ?? '',
      SMTP_URL: '',
      ...o.env,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  child.stdout!.on('data', (d) => (out = (out + d).slice(-20_000)));
  child.stderr!.on('data', (d) => (out = (out + d).slice(-20_000)));
  const exited = new Promise<number | null>((resolve) => child.on('exit', (code, signal) => resolve(code ?? (signal ? -1 : null))));
  return { child, port: o.port, base: `http://127.0.0.1:${o.port}`, exited, output: () => out };
}

/** Waits until /api/health answers 200; throws with the server's output if it exits or takes too long. */
export async function waitHealthy(s: ServerProcess, ms = 90_000): Promise<void> {
  const until = Date.now() + ms;
  while (Date.now() < until) {
    if (s.child.exitCode !== null) throw new Error(`server exited with ${s.child.exitCode}:\n${s.output()}`);
    try {
      const r = await fetch(`${s.base}/api/health`);
      if (r.ok) return;
    } catch {
      /* not yet */
    }
    await sleep(100);
  }
  throw new Error(`server did not become healthy in ${ms} ms:\n${s.output()}`);
}

/** A fresh database on the PostgreSQL server of TEST_DATABASE_URL, or undefined on PGlite. */
export function freshPostgresUrl(prefix: string): Promise<{ url: string; drop(): Promise<void> } | undefined> {
  return freshPostgres(prefix);
}

/** A port on loopback that was free a moment ago (the kernel's choice). */
export function randomPort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = net.createServer();
    s.once('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as net.AddressInfo).port;
      s.close(() => resolve(port));
    });
  });
}

/**
 * Starts the server on a free port and waits for health; on a port taken meanwhile by another
 * program (EADDRINUSE, a shared machine) it tries another port, up to three times.
 */
export async function startHealthy(o: Omit<Parameters<typeof startServerProcess>[0], 'port'>, onStart?: (s: ServerProcess) => void): Promise<ServerProcess> {
  for (let attempt = 1; ; attempt++) {
    const s = await startServerProcess({ ...o, port: await randomPort() });
    onStart?.(s);
    try {
      await waitHealthy(s);
      return s;
    } catch (e) {
      if (attempt >= 3 || !/EADDRINUSE/.test(s.output())) throw e;
    }
  }
}
