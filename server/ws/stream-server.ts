/**
 * `/ws`: live samples and run events (shared/schemas/stream.ts) on the app's HTTP server.
 * Authenticated on upgrade from the session cookie, Origin checked, heartbeat, per-client
 * backpressure that only ever skips samples for display, and client messages `watch` and
 * `lines.forwarded`. Sockets follow their session: sign-out, deactivation, role change, revocation
 * and expiry close them (code 4401 with the reason). Connections per account are bounded.
 *
 * Resume: `?since=SEQ&epoch=E` replays what was numbered after SEQ, through the bench service, in
 * pages that wait for the socket to drain, a few resumes at a time (replay-slots.ts) and at most
 * `maxReplay` messages each. A resume from another epoch (the server restarted), from beyond the
 * latest seq, or from further back than one replay serves gets `stream.reset` and goes on live.
 */
import type http from 'node:http';
import type { Duplex } from 'node:stream';
import { WebSocketServer, type RawData, type WebSocket } from 'ws';
import type { StreamMessage, StreamResetReason } from '../../shared/schemas/stream';
import { toStreamMessage, type HubEntry } from '../bench/hub';
import { ReplayGapError } from '../bench/replay';
import type { SessionUser } from '../services/auth.service';
import { handleForwarded, parseClientMessage } from './client-messages';
import { drained } from './socket-drain';
import type { StreamServerOptions } from './stream-server-options';
import { createUpgradeGate } from './upgrade-gate';
import { createReplayPacer } from './replay-pacer';
import { createReplaySlots } from './replay-slots';
import { createSessionSockets } from './session-sockets';
import { authenticateUpgrade, type StreamPrincipal } from './upgrade-auth';

export { SESSION_COOKIE } from './upgrade-auth';
export { SESSION_CLOSE_REASONS } from './session-sockets';
export type { StreamServerOptions } from './stream-server-options';

interface Client {
  ws: WebSocket;
  /** The signed-in user; null for a bench agent. */
  user: SessionUser | null;
  principal: StreamPrincipal;
  alive: boolean;
  /** Run filter for run events; null = all. */
  runId: string | null;
  /** Live messages held while a resume is being replayed. */
  held: StreamMessage[] | undefined;
  /** More live messages arrived during the resume than it may hold: it ends in `stream.reset`. */
  overflow: boolean;
  lastSent: number;
  /** Latest skipped sample per bench/device while over the high-water mark. */
  skipped: Map<string, StreamMessage>;
  skippedCount: number;
  /** Closed (or being closed) by the server: nothing more is sent or accepted. */
  ended: boolean;
  end(code: number, reason: string): void;
}

/** A signed-in user's socket (not a bench agent's). */
type UserClient = Client & { user: SessionUser };
const isUserClient = (c: Client): c is UserClient => c.user !== null;

function refuse(socket: Duplex, status: number, text: string, message: string): void {
  const body = JSON.stringify({ error: { code: status === 401 ? 'unauthenticated' : status === 403 ? 'cross_site' : status === 503 ? 'unavailable' : 'bad_request', message } });
  socket.end(`HTTP/1.1 ${status} ${text}\r\nConnection: close\r\nContent-Type: application/json\r\nContent-Length: ${Buffer.byteLength(body)}\r\n\r\n${body}`);
}

const RUN_EVENTS = new Set(['point.changed', 'run.warned', 'point.captured', 'run.changed']);

export function attachStreamServer(o: StreamServerOptions) {
  const heartbeatMs = o.heartbeatMs ?? 15_000;
  const highWater = o.highWaterBytes ?? 512 * 1024;
  const maxReplay = o.maxReplay ?? 20_000;
  const pageSize = o.replayPageSize ?? 100;
  const pacer = createReplayPacer({ restFactor: o.replayRestFactor ?? 8 });
  const lowWater = o.replayLowWaterBytes ?? 64 * 1024;
  const stallMs = o.replayStallMs ?? 30_000;
  const sessions = createSessionSockets<UserClient>({ sessionEvents: o.sessionEvents, maxPerUser: o.maxConnectionsPerUser ?? 10 });
  const slots = createReplaySlots({ total: o.maxReplays ?? 2, perUser: o.maxReplaysPerUser ?? 1 });
  const addressOf = o.clientAddress ?? ((req: http.IncomingMessage): string | undefined => req.socket.remoteAddress);
  const upgrades = createUpgradeGate({
    atOnce: o.maxUpgradesAtOnce ?? 2,
    maxWaiting: o.maxUpgradesWaiting ?? 500,
    // A tenth of the queue (our own figure): one peer cannot fill it, a site behind one proxy
    // without TRUST_PROXY still gets fifty sockets in line at once.
    maxWaitingPerAddress: o.maxUpgradesWaitingPerAddress ?? 50,
    onError: (err) => o.logger.warn({ err }, 'a socket upgrade failed'),
  });
  const wss = new WebSocketServer({ noServer: true, maxPayload: o.maxPayload ?? 64 * 1024 });
  const clients = new Set<Client>();
  const stats = { connected: 0, refused: 0, skippedSamples: 0, forwardedLines: 0, replayed: 0, resets: 0 };

  /** Sends one message; `written`, when given, is called once it has been handed to the OS (or failed). */
  const send = (c: Client, m: StreamMessage, written?: () => void): void => {
    if (c.ended || c.ws.readyState !== c.ws.OPEN) {
      written?.();
      return;
    }
    c.ws.send(JSON.stringify(m), written && (() => written()));
    if (m.seq > c.lastSent) c.lastSent = m.seq;
  };

  const wanted = (c: Client, m: StreamMessage): boolean => !(RUN_EVENTS.has(m.type) && c.runId && 'runId' in m && m.runId !== c.runId);

  /** Sends a live message, or keeps only the latest sample for display while the client is behind. */
  const deliver = (c: Client, m: StreamMessage): void => {
    if (c.held) {
      if (c.held.length >= maxReplay) {
        c.overflow = true;
        c.held.length = 0;
      }
      c.held.push(m);
      return;
    }
    if (m.seq <= c.lastSent || !wanted(c, m)) return;
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

  /** Takes a client out of every list and stops its timers (idempotent). */
  function forget(c: Client): void {
    clients.delete(c);
    if (isUserClient(c)) sessions.leave(c);
  }

  const onUpgrade = (req: http.IncomingMessage, socket: Duplex, head: Buffer): void => {
    const url = new URL(req.url ?? '/', 'http://localhost');
    if (url.pathname !== '/ws') {
      socket.destroy();
      return;
    }
    socket.on('error', () => {});
    const asked = performance.now();
    const admitted = upgrades.enter(socket, () => admitUpgrade(req, socket, head, url, asked), addressOf(req));
    if (!admitted) {
      stats.refused++;
      refuse(socket, 503, 'Service Unavailable', 'Too many connections are opening; try again shortly');
    }
  };

  async function admitUpgrade(req: http.IncomingMessage, socket: Duplex, head: Buffer, url: URL, asked: number): Promise<void> {
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
    const since = sinceRaw !== null && /^\d{1,15}$/.test(sinceRaw) ? Number(sinceRaw) : undefined;
    const epoch = url.searchParams.get('epoch');
    if (socket.destroyed) return;
    wss.handleUpgrade(req, socket, head, (ws) => open(ws, user, principal, since, epoch, asked));
  }

  function open(ws: WebSocket, user: SessionUser | null, principal: StreamPrincipal, since: number | undefined, epoch: string | null, asked: number): void {
    const c: Client = {
      ws,
      user,
      principal,
      alive: true,
      runId: null,
      held: undefined,
      overflow: false,
      lastSent: 0,
      skipped: new Map(),
      skippedCount: 0,
      ended: false,
      end(code, reason) {
        if (c.ended) return;
        c.ended = true;
        forget(c);
        ws.close(code, reason);
      },
    };
    ws.on('close', () => forget(c));
    ws.on('error', () => forget(c));
    // A user's socket follows the session; a bench agent's follows its token (revocation, below).
    const refusal = isUserClient(c) ? sessions.admit(c, asked) : undefined;
    if (refusal) return c.end(refusal.code, refusal.reason);
    clients.add(c);
    stats.connected++;
    ws.on('pong', () => {
      c.alive = true;
    });
    ws.on('message', (data: RawData, isBinary: boolean) => onMessage(c, data, isBinary));

    const latest = o.bench.latestSeq();
    const opened = (seq: number) => {
      send(c, { type: 'stream.opened', seq, latestSeq: latest, heartbeatMs, epoch: o.bench.epoch });
      c.lastSent = seq;
    };
    if (since === undefined) return opened(latest);
    const notServed: StreamResetReason | undefined = epoch !== o.bench.epoch ? 'epoch' : since > latest ? 'ahead' : latest - since > maxReplay ? 'behind' : undefined;
    if (notServed) {
      opened(latest);
      return reset(c, notServed, since);
    }
    opened(since);
    if (since < latest) void resume(c, since, latest);
  }

  /** Tells the client its resume was not served; the stream goes on live after the latest seq. */
  function reset(c: Client, reason: StreamResetReason, fromSeq: number): void {
    stats.resets++;
    const seq = Math.max(o.bench.latestSeq(), c.lastSent);
    send(c, { type: 'stream.reset', seq, epoch: o.bench.epoch, fromSeq, reason });
    c.lastSent = seq;
  }

  const gone = (c: Client) => c.ended || c.ws.readyState !== c.ws.OPEN;

  /** Replays (since, latest] in pages while live messages wait, then hands over to live delivery. */
  async function resume(c: Client, since: number, latest: number): Promise<void> {
    c.held = [];
    const slot = slots.acquire(c.user?.id ?? `${c.principal.kind}:${'benchId' in c.principal ? c.principal.benchId : ''}`);
    const closed = () => slot.cancel();
    c.ws.once('close', closed);
    const release = await slot.ready;
    c.ws.off('close', closed);
    let failed: StreamResetReason | undefined;
    try {
      if (gone(c)) return;
      for await (const page of o.bench.replay(since, latest, pageSize)) {
        if (gone(c) || c.overflow) break;
        const started = performance.now();
        const toSend = page.filter((m) => wanted(c, m));
        let written = Promise.resolve();
        toSend.forEach((m, i) => {
          if (i < toSend.length - 1) send(c, m);
          else written = new Promise<void>((resolve) => send(c, m, resolve));
        });
        stats.replayed += page.length;
        c.lastSent = Math.max(c.lastSent, page[page.length - 1]!.seq);
        pacer.worked(performance.now() - started);
        await pacer.rest();
        if (!(await drained(c.ws, written, { stallMs, lowWater, gone: () => gone(c) }))) {
          o.logger.warn({ user: c.user?.id ?? null, principal: c.principal }, 'stream resume stalled: the client does not read; dropped');
          c.ws.terminate();
          return;
        }
      }
    } catch (err) {
      failed = err instanceof ReplayGapError ? 'behind' : 'unavailable';
      if (failed === 'unavailable') o.logger.warn({ err }, 'stream resume from storage failed');
    } finally {
      release();
    }
    if (gone(c)) return;
    if (c.overflow) failed = 'behind';
    if (failed) reset(c, failed, since);
    const held = c.held ?? [];
    c.held = undefined;
    c.overflow = false;
    for (const m of held) deliver(c, m);
  }

  function onMessage(c: Client, data: RawData, isBinary: boolean): void {
    if (c.ended) return;
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
        forget(c);
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
    stats: () => ({ ...stats, ...sessions.stats(), clients: clients.size, replays: slots.stats() }),
    /** Closes every client (1001 going away) and stops listening for upgrades. */
    async close(): Promise<void> {
      clearInterval(beat);
      o.server.off('upgrade', onUpgrade);
      unsubscribe();
      const all = [...clients];
      for (const c of all) c.end(1001, 'server shutting down');
      sessions.close();
      await new Promise((r) => setTimeout(r, 50));
      for (const c of all) c.ws.terminate();
      clients.clear();
      await new Promise<void>((resolve) => wss.close(() => resolve()));
    },
  };
}
export type StreamServer = ReturnType<typeof attachStreamServer>;
