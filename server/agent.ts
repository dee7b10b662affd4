/**
 * Bench agent: runs the bench's instruments on a bench PC (real serial ports or the simulated rig)
 * and forwards every raw line to a central Stillpoint server over `/ws`, authenticated with the
 * bench's own token (registered on the server's Bench page by a lead or an admin). Lines go through
 * the shared line forwarder (numbered batches, resent until acknowledged as durably stored) and an
 * on-disk store-and-forward queue, so neither a dropped link, hours without the server, nor the
 * agent's own restart loses or doubles a line.
 *
 * `npm run agent -- --server URL --bench-id ID [--token TOKEN | AGENT_TOKEN=...] [--queue DIR] [--sim | --pressure PATH --current PATH]`
 */
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import WebSocket from 'ws';
import { LineForwarder, type DeviceKind } from '../shared/protocol';
import { StreamMessageSchema } from '../shared/schemas/stream';
import { AgentQueue } from './bench/agent-queue';
import { BenchDevices } from './bench/bench-devices';
import { defaultBinding } from './bench/transport';
import { parseAgentEnv } from './env';
import { SIM_PATHS, SimRig } from '../simulators/sim-rig';
import { backoffDelay } from '../shared/backoff';

/** Options of {@link startAgent}. */
export interface AgentOptions {
  server: string;
  /** The bench's token, as shown once when it was registered. */
  token: string;
  /** The registered bench's id. */
  benchId: string;
  /** Directory of the on-disk queue. Default `./agent-queue/<benchId>`. */
  queueDir?: string;
  /** Use the simulated rig instead of serial ports. */
  sim?: boolean;
  paths?: { pressure: string; current: string };
  /** Read no instruments: lines come only from {@link Agent.feed} (a fast simulated rig in tests). */
  noDevices?: boolean;
  /** Most lines kept while the server is unreachable; the oldest are dropped beyond it. Default 2 000 000. */
  maxQueuedLines?: number;
  /** Send interval, ms. Default 100 ms. */
  sendEveryMs?: number;
  /** Longest reconnect delay, ms. Default 10 000 (doubling from 500). */
  maxBackoffMs?: number;
  /** The agent's wall clock (tests). Default Date.now. */
  now?: () => number;
  log?: (msg: string) => void;
}

export async function startAgent(o: AgentOptions) {
  const server = o.server.replace(/\/$/, '');
  const benchId = o.benchId;
  const log = o.log ?? (() => {});
  const queue = AgentQueue.open({ dir: o.queueDir ?? path.resolve('agent-queue', benchId) });
  const link = { reconnects: 0, refusedUpgrades: 0, lastClose: null as string | null };
  let ws: WebSocket | undefined;
  let stopped = false;
  let retry: NodeJS.Timeout | undefined;
  let failures = 0;

  const forwarder = new LineForwarder({
    benchId,
    senderId: queue.senderId,
    now: o.now,
    maxLines: o.maxQueuedLines ?? 2_000_000,
    restore: queue.restore,
    store: queue,
    send: (m) => {
      const socket = ws;
      if (!socket || socket.readyState !== WebSocket.OPEN) return false;
      socket.send(JSON.stringify(m));
      return true;
    },
  });
  if (queue.restore.batches.length || queue.restore.open.length) {
    log(`resuming ${queue.restore.batches.length} unacknowledged batches and ${queue.restore.open.length} lines from ${o.queueDir ?? 'the queue'}`);
  }

  const rig = o.sim && !o.noDevices ? new SimRig({ seed: 7 }) : undefined;
  const paths = rig ? SIM_PATHS : o.paths;
  if (!o.noDevices && !paths) throw new Error('give --sim, or --pressure PATH and --current PATH');
  const devices = o.noDevices
    ? undefined
    : new BenchDevices({
        benchId,
        binding: rig ? rig.binding : defaultBinding(),
        paths: paths!,
        onSample: (device, raw) => forwarder.push({ device, raw: raw.slice(0, 512), wallMs: (o.now ?? Date.now)() }),
        onStatus: (e) => log(`${e.device} ${e.type === 'device.connected' ? 'connected' : `disconnected (${e.reason})`} on ${e.path}`),
      });

  function connect(): void {
    if (stopped) return;
    const socket = new WebSocket(`${server.replace(/^http/, 'ws')}/ws`, { headers: { authorization: `Bearer ${o.token}` } });
    socket.on('open', () => {
      ws = socket;
      failures = 0;
      log(`linked to ${server} as bench ${benchId}`);
      forwarder.linkUp();
    });
    socket.on('unexpected-response', (_req, res) => {
      res.resume();
      link.refusedUpgrades++;
      if (res.statusCode === 401) log('the server refused the bench token (unknown or revoked); lines are kept and the agent keeps trying');
    });
    socket.on('message', (data) => {
      let m;
      try {
        m = StreamMessageSchema.safeParse(JSON.parse(String(data)));
      } catch {
        return;
      }
      if (m.success && m.data.type === 'lines.acked') {
        if (m.data.status === 'refused') log(`batch ${m.data.batchSeq} refused: ${m.data.reason}`);
        forwarder.acked(m.data);
      }
    });
    socket.on('error', () => {});
    socket.on('close', (code, reason) => {
      if (ws === socket) {
        ws = undefined;
        forwarder.linkDown();
        link.lastClose = `${code} ${String(reason)}`;
      }
      if (stopped) return;
      link.reconnects++;
      failures++;
      const delay = backoffDelay(failures, { initialMs: 500, maxMs: o.maxBackoffMs ?? 10_000 });
      retry = setTimeout(connect, delay);
    });
  }

  const timer = setInterval(() => forwarder.tick(), o.sendEveryMs ?? 100);
  connect();
  devices?.start();

  const halt = async (graceful: boolean): Promise<void> => {
    stopped = true;
    clearInterval(timer);
    clearTimeout(retry);
    await devices?.stop().catch(() => {});
    rig?.dispose();
    if (graceful) {
      forwarder.tick();
      queue.close();
    } else queue.abandon();
    const socket = ws;
    if (!socket) return;
    if (!graceful) {
      socket.terminate();
      return;
    }
    await new Promise<void>((resolve) => {
      socket.once('close', () => resolve());
      socket.close(1000, 'agent stopping');
      setTimeout(resolve, 1000).unref();
    });
  };

  return {
    benchId,
    rig,
    senderId: queue.senderId,
    stats: () => ({ ...forwarder.stats, ...link, linked: !!ws, queueBytes: queue.bytes() }),
    /** A line as if read from an instrument (a fast simulated rig in tests). */
    feed(device: DeviceKind, raw: string): void {
      forwarder.push({ device, raw: raw.slice(0, 512), wallMs: (o.now ?? Date.now)() });
    },
    /** Seals and sends now, rather than at the next interval. */
    tick(): void {
      forwarder.tick();
    },
    /** Drops the link as a network fault would (tests). */
    dropLink(): void {
      ws?.terminate();
    },
    /** Stops reading the instruments; what is queued is still sent. */
    async stopDevices(): Promise<void> {
      await devices?.stop();
      rig?.dispose();
    },
    /** Stops: seals what is open, closes the queue (what is unacknowledged stays on disk) and the link. */
    stop: () => halt(true),
    /** Stops at once as a kill would: nothing more is sealed, synced or sent (tests). */
    crash: () => halt(false),
  };
}
export type Agent = Awaited<ReturnType<typeof startAgent>>;

function arg(name: string): string | undefined {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 ? process.argv[i + 1] : undefined;
}

async function main(): Promise<void> {
  const server = arg('server');
  const benchId = arg('bench-id');
  const token = arg('token') ?? parseAgentEnv().AGENT_TOKEN;
  if (!server || !benchId || !token) {
    console.error('usage: npm run agent -- --server URL --bench-id ID [--token TOKEN | AGENT_TOKEN=...] [--queue DIR] [--sim | --pressure PATH --current PATH]');
    console.error('Register the bench on the server first (Bench page, lead or admin): it shows the token once.');
    process.exitCode = 2;
    return;
  }
  const pressure = arg('pressure');
  const current = arg('current');
  const agent = await startAgent({
    server,
    token,
    benchId,
    queueDir: arg('queue'),
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
