/**
 * `/ws`: live samples and run events (shared/schemas/stream.ts) on the app's HTTP server.
 * Authenticated on upgrade from the session cookie, Origin checked, heartbeat, resume by sequence
 * number (`?since=SEQ`, from the ring buffer or the stored samples), per-client backpressure that
 * only ever skips samples for display, and client messages `watch` and `lines.forwarded`.
 */
import type http from 'node:http';
import type { Duplex } from 'node:stream';
import type { Logger } from 'pino';
import { WebSocketServer, type RawData, type WebSocket } from 'ws';
import type { StreamMessage } from '../../shared/schemas/stream';
import { toStreamMessage, type HubEntry } from '../bench/hub';
import type { AuthService, SessionUser } from '../services/auth.service';
import { handleForwarded, parseClientMessage } from './client-messages';
import { authenticateUpgrade, type StreamPrincipal } from './upgrade-auth';
import type { BenchService } from '../services/bench.service';
import type { BenchRegistry } from '../services/bench-registry.service';
import type { ForwardService } from '../services/forward.service';

export { SESSION_COOKIE } from './upgrade-auth';

/** Options of {@link attachStreamServer}. */
export interface StreamServerOptions {
  server: http.Server;
  auth: AuthService;
  bench: BenchService;
  /** Registered benches (agent tokens) and forwarded lines. */
  registry: BenchRegistry;
  forward: ForwardService;
  logger: Logger;
  /** Origins allowed besides the server's own. */
  allowedOrigins: string[];
  /** Ping interval, ms; a client that has not answered the previous ping is dropped. Default 15 000. */
  heartbeatMs?: number;
  /** Largest client message, bytes. Default 64 KiB. */
  maxPayload?: number;
  /** Above this many buffered bytes a client gets only the latest sample per device. Default 512 KiB. */
  highWaterBytes?: number;
  /** Most stored samples replayed on a resume. Default 100 000. */
  maxReplayFromDb?: number;
}

interface Client {
  ws: WebSocket;
  /** The signed-in user; null for a bench agent. */
  user: SessionUser | null;
  principal: StreamPrincipal;
  alive: boolean;
  /** Run filter for run events; null = all. */
  runId: string | null;
  /** Live messages held while a resume is being read from the database. */
  held: StreamMessage[] | undefined;
  lastSent: number;
  /** Latest skipped sample per bench/device while over the high-water mark. */
  skipped: Map<string, StreamMessage>;
  skippedCount: number;
}

function refuse(socket: Duplex, status: number, text: string, message: string): void {
  const body = JSON.stringify({ error: { code: status === 401 ? 'unauthenticated' : status === 403 ? 'cross_site' : 'bad_request', message } });
  socket.end(`HTTP/1.1 ${status} ${text}\r\nConnection: close\r\nContent-Type: application/json\r\nContent-Length: ${Buffer.byteLength(body)}\r\n\r\n${body}`);
}

const RUN_EVENTS = new Set(['point.changed', 'run.warned', 'point.captured', 'run.changed']);

export function attachStreamServer(o: StreamServerOptions) {
  const heartbeatMs = o.heartbeatMs ?? 15_000;
  const highWater = o.highWaterBytes ?? 512 * 1024;
  const wss = new WebSocketServer({ noServer: true, maxPayload: o.maxPayload ?? 64 * 1024 });
  const clients = new Set<Client>();
  const stats = { connected: 0, refused: 0, skippedSamples: 0, forwardedLines: 0 };

  const send = (c: Client, m: StreamMessage): void => {
    if (c.ws.readyState !== c.ws.OPEN) return;
    c.ws.send(JSON.stringify(m));
    if (m.seq > c.lastSent) c.lastSent = m.seq;
  };

  /** Sends a live message, or keeps only the latest sample for display while the client is behind. */
  const deliver = (c: Client, m: StreamMessage): void => {
    if (c.held) {
      c.held.push(m);
      return;
    }
    if (m.seq <= c.lastSent) return;
    if (RUN_EVENTS.has(m.type) && c.runId && 'runId' in m && m.runId !== c.runId) return;
    if (m.type === 'sample.received' && c.ws.bufferedAmount > highWater) {
      c.skipped.set(`${m.benchId}/${m.device}`, m);
      c.skippedCount++;
      stats.skippedSamples++;
      return;
    }
    if (c.skipped.size && c.ws.bufferedAmount <= highWater / 2) {
      const latest = [...c.skipped.values()].sort((a, b) => a.seq - b.seq);
      c.skipped.clear();
      for (const s of latest) send(c, s);
    }
    send(c, m);
  };

  const unsubscribe = o.bench.subscribe('stream', (batch: HubEntry[]) => {
    if (!clients.size) return;
    const msgs = batch.map(toStreamMessage);
    for (const c of clients) for (const m of msgs) deliver(c, m);
  });

  const onUpgrade = (req: http.IncomingMessage, socket: Duplex, head: Buffer): void => {
    const url = new URL(req.url ?? '/', 'http://localhost');
    if (url.pathname !== '/ws') {
      socket.destroy();
      return;
    }
    socket.on('error', () => {});
    void (async () => {
      const origin = req.headers.origin;
      if (origin) {
        const own = [`http://${req.headers.host}`, `https://${req.headers.host}`];
        if (!own.includes(origin) && !o.allowedOrigins.includes(origin)) {
          stats.refused++;
          refuse(socket, 403, 'Forbidden', 'Connection refused: it came from another site');
          return;
        }
      }
      const who = await authenticateUpgrade(req, o.auth, o.registry);
      if (!who.ok) {
        stats.refused++;
        refuse(socket, who.status, who.status === 401 ? 'Unauthorized' : 'Forbidden', who.message);
        return;
      }
      const { user, principal } = who;
      const sinceRaw = url.searchParams.get('since');
      const since = sinceRaw !== null && /^\d+$/.test(sinceRaw) ? Number(sinceRaw) : undefined;
      wss.handleUpgrade(req, socket, head, (ws) => open(ws, user, principal, since));
    })();
  };

  function open(ws: WebSocket, user: SessionUser | null, principal: StreamPrincipal, since: number | undefined): void {
    const hub = o.bench.hub;
    const c: Client = { ws, user, principal, alive: true, runId: null, held: undefined, lastSent: 0, skipped: new Map(), skippedCount: 0 };
    clients.add(c);
    stats.connected++;
    ws.on('pong', () => {
      c.alive = true;
    });
    ws.on('close', () => clients.delete(c));
    ws.on('error', () => clients.delete(c));
    ws.on('message', (data: RawData, isBinary: boolean) => onMessage(c, data, isBinary));
    const latest = hub.latestSeq;
    if (since === undefined || since >= latest) {
      send(c, { type: 'stream.opened', seq: since ?? latest, latestSeq: latest, heartbeatMs });
      c.lastSent = since ?? latest;
      return;
    }
    send(c, { type: 'stream.opened', seq: since, latestSeq: latest, heartbeatMs });
    c.lastSent = since;
    // Everything live from here on is after `latest`: the replay covers (since, latest], in order.
    const fromRing = hub.ring.since(since);
    if (fromRing) {
      for (const e of fromRing) send(c, toStreamMessage(e));
      return;
    }
    c.held = [];
    void (async () => {
      try {
        const oldest = hub.ring.oldestSeq ?? latest + 1;
        const limit = o.maxReplayFromDb ?? 100_000;
        const rows = await o.bench.samplesAfter(since, limit);
        const stored = rows.filter((r) => Number(r.seq) < oldest);
        const ring = hub.ring.since(oldest - 1);
        const complete = rows.length < limit || Number(rows[rows.length - 1]!.seq) >= oldest - 1;
        if (!ring || !complete) {
          send(c, { type: 'stream.resynced', seq: hub.latestSeq, fromSeq: since });
          c.lastSent = hub.latestSeq;
        } else {
          for (const r of stored) {
            send(c, {
              type: 'sample.received',
              seq: Number(r.seq),
              benchId: r.benchId,
              device: r.device as 'pressure' | 'current',
              value: r.value,
              unit: r.unit,
              raw: r.raw,
              wallMs: r.wallMs,
              runId: r.runId,
            });
          }
          for (const e of ring) send(c, toStreamMessage(e));
        }
      } catch (err) {
        o.logger.warn({ err }, 'stream resume from storage failed');
        send(c, { type: 'stream.resynced', seq: hub.latestSeq, fromSeq: since });
        c.lastSent = hub.latestSeq;
      }
      const held = c.held ?? [];
      c.held = undefined;
      for (const m of held) deliver(c, m);
    })();
  }

  function onMessage(c: Client, data: RawData, isBinary: boolean): void {
    const m = parseClientMessage(data, isBinary);
    if (!m) return;
    if (m.type === 'watch') {
      c.runId = m.runId;
      return;
    }
    const r = handleForwarded(c.principal, m, o.forward, {
      send: (ack) => {
        if (c.ws.readyState === c.ws.OPEN) c.ws.send(JSON.stringify(ack));
      },
      close: (code, reason) => c.ws.close(code, reason),
    });
    stats.forwardedLines += r.lines;
  }

  const beat = setInterval(() => {
    for (const c of clients) {
      if (!c.alive) {
        c.ws.terminate();
        clients.delete(c);
        continue;
      }
      c.alive = false;
      c.ws.ping();
    }
  }, heartbeatMs);
  beat.unref();

  o.server.on('upgrade', onUpgrade);
  // A revoked bench's agent is disconnected at once.
  o.registry.onRevoked((benchId) => {
    for (const c of clients) if (c.principal.kind === 'agent' && c.principal.benchId === benchId) c.ws.close(4403, 'bench revoked');
  });

  return {
    stats: () => ({ ...stats, clients: clients.size }),
    /** Closes every client (1001 going away) and stops listening for upgrades. */
    async close(): Promise<void> {
      clearInterval(beat);
      o.server.off('upgrade', onUpgrade);
      unsubscribe();
      for (const c of clients) c.ws.close(1001, 'server shutting down');
      await new Promise((r) => setTimeout(r, 50));
      for (const c of clients) c.ws.terminate();
      clients.clear();
      await new Promise<void>((resolve) => wss.close(() => resolve()));
    },
  };
}
export type StreamServer = ReturnType<typeof attachStreamServer>;
