/**
 * Bench agent: runs the bench's instruments on a bench PC (real serial ports or the simulated
 * rig) and forwards every raw line to a central Stillpoint server over the authenticated
 * WebSocket (`lines.forwarded`), buffering while the link is down.
 *
 * `npm run agent -- --server URL --email E --password P [--bench-id ID] [--sim | --pressure PATH --current PATH]`
 */
import { pathToFileURL } from 'node:url';
import WebSocket from 'ws';
import type { DeviceKind } from '../shared/protocol';
import type { ClientMessage } from '../shared/schemas/stream';
import { BenchDevices } from './bench/bench-devices';
import { defaultBinding } from './bench/transport';
import { parseAgentEnv } from './env';
import { SIM_PATHS, SimRig } from '../simulators/sim-rig';

/** Options of {@link startAgent}. */
export interface AgentOptions {
  server: string;
  email: string;
  password: string;
  benchId?: string;
  /** Use the simulated rig instead of serial ports. */
  sim?: boolean;
  paths?: { pressure: string; current: string };
  /** Most lines buffered while the link is down; the oldest are dropped beyond it. Default 500 000. */
  maxBuffered?: number;
  /** Send interval, ms. Default 100 ms. */
  sendEveryMs?: number;
  log?: (msg: string) => void;
}

type Line = { device: DeviceKind; raw: string; wallMs: number };

/** Signs in and returns the session cookie (`sp_session=...`). */
async function signIn(server: string, email: string, password: string): Promise<string> {
  const res = await fetch(`${server}/api/auth/login`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', origin: server },
    body: JSON.stringify({ email, password }),
  });
  if (res.status !== 200) throw new Error(`sign-in to ${server} as ${email} failed: HTTP ${res.status}`);
  const cookie = res.headers.getSetCookie().find((c) => c.startsWith('sp_session='));
  if (!cookie) throw new Error('sign-in answered without a session cookie');
  return cookie.split(';')[0]!;
}

export async function startAgent(o: AgentOptions) {
  const server = o.server.replace(/\/$/, '');
  const benchId = o.benchId ?? 'agent-1';
  const log = o.log ?? (() => {});
  const maxBuffered = o.maxBuffered ?? 500_000;
  const stats = { read: 0, sent: 0, dropped: 0, reconnects: 0, buffered: 0 };
  let buffer: Line[] = [];
  let cookie = await signIn(server, o.email, o.password);
  let ws: WebSocket | undefined;
  let stopped = false;
  let retry: NodeJS.Timeout | undefined;

  const rig = o.sim ? new SimRig({ seed: 7 }) : undefined;
  const paths = rig ? SIM_PATHS : o.paths;
  if (!paths) throw new Error('give --sim, or --pressure PATH and --current PATH');
  const devices = new BenchDevices({
    benchId,
    binding: rig ? rig.binding : defaultBinding(),
    paths,
    onSample: (device, raw) => {
      stats.read++;
      buffer.push({ device, raw: raw.slice(0, 512), wallMs: Date.now() });
      if (buffer.length > maxBuffered) {
        const drop = buffer.length - maxBuffered;
        buffer = buffer.slice(drop);
        stats.dropped += drop;
      }
    },
    onStatus: (e) => log(`${e.device} ${e.type === 'device.connected' ? 'connected' : `disconnected (${e.reason})`} on ${e.path}`),
  });

  function connect(): void {
    if (stopped) return;
    const socket = new WebSocket(`${server.replace(/^http/, 'ws')}/ws`, { headers: { cookie, origin: server } });
    socket.on('open', () => {
      ws = socket;
      log(`linked to ${server} as bench ${benchId}`);
      socket.send(JSON.stringify({ type: 'watch', runId: null } satisfies ClientMessage));
    });
    socket.on('unexpected-response', (_req, res) => {
      res.resume();
      if (res.statusCode === 401) {
        // Session expired or revoked: sign in again before the next attempt.
        signIn(server, o.email, o.password).then(
          (c) => (cookie = c),
          (e: Error) => log(e.message),
        );
      }
    });
    socket.on('message', () => {});
    socket.on('error', () => {});
    socket.on('close', () => {
      if (ws === socket) ws = undefined;
      if (stopped) return;
      stats.reconnects++;
      retry = setTimeout(connect, 1000);
    });
  }

  /** Sends what is buffered, in batches of at most 500 lines (the server's limit). */
  function flush(): void {
    const socket = ws;
    while (socket && socket.readyState === WebSocket.OPEN && buffer.length && socket.bufferedAmount < 1 << 20) {
      const lines = buffer.slice(0, 500);
      const msg: ClientMessage = { type: 'lines.forwarded', benchId, lines };
      socket.send(JSON.stringify(msg));
      buffer = buffer.slice(lines.length);
      stats.sent += lines.length;
    }
    stats.buffered = buffer.length;
  }

  const timer = setInterval(flush, o.sendEveryMs ?? 100);
  connect();
  devices.start();

  return {
    benchId,
    rig,
    stats: () => ({ ...stats, buffered: buffer.length, linked: !!ws }),
    /** Drops the link as a network fault would (tests). */
    dropLink(): void {
      ws?.terminate();
    },
    /** Stops reading the instruments; the rest of the buffer is sent if the link is up. */
    async stopDevices(): Promise<void> {
      await devices.stop();
      rig?.dispose();
    },
    async stop(): Promise<void> {
      await devices.stop().catch(() => {});
      rig?.dispose();
      flush();
      stopped = true;
      clearInterval(timer);
      clearTimeout(retry);
      const socket = ws;
      if (socket) {
        await new Promise<void>((resolve) => {
          socket.once('close', () => resolve());
          socket.close(1000, 'agent stopping');
          setTimeout(resolve, 1000).unref();
        });
      }
    },
  };
}

function arg(name: string): string | undefined {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 ? process.argv[i + 1] : undefined;
}

async function main(): Promise<void> {
  const server = arg('server');
  const email = arg('email');
  const password = arg('password') ?? parseAgentEnv().AGENT_PASSWORD;
  if (!server || !email || !password) {
    console.error('usage: npm run agent -- --server URL --email E --password P [--bench-id ID] [--sim | --pressure PATH --current PATH]');
    process.exitCode = 2;
    return;
  }
  const pressure = arg('pressure');
  const current = arg('current');
  const agent = await startAgent({
    server,
    email,
    password,
    benchId: arg('bench-id'),
    sim: process.argv.includes('--sim') || !(pressure && current),
    paths: pressure && current ? { pressure, current } : undefined,
    log: (m) => console.log(`[agent] ${m}`),
  });
  const report = setInterval(() => console.log(`[agent] ${JSON.stringify(agent.stats())}`), 10_000);
  const shutdown = (): void => {
    clearInterval(report);
    agent.stop().then(
      () => process.exit(0),
      () => process.exit(1),
    );
  };
  process.once('SIGINT', shutdown);
  process.once('SIGTERM', shutdown);
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  main().catch((e: unknown) => {
    console.error(e instanceof Error ? e.message : e);
    process.exitCode = 1;
  });
}
