/**
 * The page's only WebSocket: `/ws` with the session cookie. Reconnects with exponential backoff
 * and resumes with `?since=<last seq>&epoch=<stream epoch>`, so no message is lost across a drop;
 * after a server restart (or when the server cannot replay what was missed) it gets
 * `stream.reset` and re-reads runs, jobs and the bench over HTTP. Drops duplicates by sequence
 * number; checks every message against `StreamMessageSchema`; pushes samples into the
 * live-sample store and updates or invalidates TanStack Query caches on point and run events.
 * When the server closes the socket because the session ended (code 4401) it shows the reason
 * and stops reconnecting.
 */
import type { QueryClient } from '@tanstack/react-query';
import { useEffect, useSyncExternalStore } from 'react';
import { backoffDelay } from '../../shared/backoff';
import { STREAM_CLOSE, StreamMessageSchema, type ClientMessage, type StreamMessage } from '../../shared/schemas/stream';
import { applyStreamMessage } from './apply-stream-message';
import { queryKeys } from './query-keys';

/** `signed-out`: the server closed the stream because the session ended; no reconnect until the next sign-in. */
export type LiveStatus = 'idle' | 'connecting' | 'open' | 'reconnecting' | 'closed' | 'signed-out';

/** The part of the browser WebSocket we use (a fake one in tests). */
export interface SocketLike {
  readyState: number;
  onopen: ((ev: unknown) => void) | null;
  onmessage: ((ev: { data: unknown }) => void) | null;
  onclose: ((ev: unknown) => void) | null;
  onerror: ((ev: unknown) => void) | null;
  send(data: string): void;
  close(code?: number, reason?: string): void;
}

export interface LiveStreamOptions {
  /** Builds the socket; default `new WebSocket(url)`. */
  createSocket?: (url: string) => SocketLike;
  /** Base URL of the stream; default ws(s)://<this host>/ws. */
  baseUrl?: () => string;
  /** First reconnect delay, ms. Default 500 ms. */
  initialBackoffMs?: number;
  /** Longest reconnect delay, ms. Default 10 s. */
  maxBackoffMs?: number;
  /** 0–1 random spread added to each delay (avoids a thundering herd). Default 0.2. */
  jitter?: number;
  /** Timers (fake ones in tests). */
  setTimer?: (cb: () => void, ms: number) => unknown;
  clearTimer?: (handle: unknown) => void;
  random?: () => number;
}

const OPEN = 1;

function defaultBaseUrl(): string {
  const { protocol, host } = window.location;
  return `${protocol === 'https:' ? 'wss:' : 'ws:'}//${host}/ws`;
}

export class LiveStream {
  private socket: SocketLike | null = null;
  private status: LiveStatus = 'idle';
  private users = 0;
  private failures = 0;
  private reconnectTimer: unknown = null;
  private heartbeatTimer: unknown = null;
  private heartbeatMs = 0;
  private watching: string | null = null;
  private readonly listeners = new Set<(m: StreamMessage) => void>();
  private readonly statusListeners = new Set<() => void>();
  private readonly opts: Required<LiveStreamOptions>;
  /** Sequence number of the last message handled; the resume point. */
  lastSeq: number | null = null;
  /** Stream epoch of `lastSeq` (a new one at each server start). */
  epoch: string | null = null;
  /** Why the server last closed the stream (its close reason), until the next open. */
  private notice: string | null = null;
  /** Messages that failed the contract (counted, not thrown). */
  rejected = 0;

  constructor(options: LiveStreamOptions = {}) {
    this.opts = {
      createSocket: options.createSocket ?? ((url) => new WebSocket(url) as unknown as SocketLike),
      baseUrl: options.baseUrl ?? defaultBaseUrl,
      initialBackoffMs: options.initialBackoffMs ?? 500,
      maxBackoffMs: options.maxBackoffMs ?? 10_000,
      jitter: options.jitter ?? 0.2,
      setTimer: options.setTimer ?? ((cb, ms) => setTimeout(cb, ms)),
      clearTimer: options.clearTimer ?? ((h) => clearTimeout(h as ReturnType<typeof setTimeout>)),
      random: options.random ?? Math.random,
    };
  }

  getStatus = (): LiveStatus => this.status;

  /** The server's reason for the last close it made (signed out, too many connections), or null. */
  getNotice = (): string | null => this.notice;

  subscribeStatus = (l: () => void): (() => void) => {
    this.statusListeners.add(l);
    return () => this.statusListeners.delete(l);
  };

  /** Listen to every accepted message, in sequence order. */
  subscribe(listener: (m: StreamMessage) => void): () => void {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  }

  /** Reference-counted connection: connects on the first user, closes after the last. */
  acquire(): () => void {
    this.users += 1;
    if (this.users === 1) this.connect();
    let released = false;
    return () => {
      if (released) return;
      released = true;
      this.users -= 1;
      if (this.users === 0) this.shutdown();
    };
  }

  /** Ask the server for a run's point and warning events (re-sent after every reconnect). */
  watch(runId: string | null): void {
    this.watching = runId;
    this.send({ type: 'watch', runId });
  }

  /** Sends a client message when open; false when it could not be sent now. */
  send(message: ClientMessage): boolean {
    if (!this.socket || this.socket.readyState !== OPEN) return false;
    this.socket.send(JSON.stringify(message));
    return true;
  }

  /** URL of the next connection: resumes after the last handled message of its epoch. */
  url(): string {
    const base = this.opts.baseUrl();
    if (this.lastSeq === null) return base;
    return `${base}?since=${this.lastSeq}${this.epoch === null ? '' : `&epoch=${encodeURIComponent(this.epoch)}`}`;
  }

  private setStatus(s: LiveStatus): void {
    if (this.status === s) return;
    this.status = s;
    for (const l of [...this.statusListeners]) l();
  }

  private connect(): void {
    this.clearReconnect();
    if (this.status === 'signed-out') this.notice = null;
    this.setStatus(this.failures > 0 ? 'reconnecting' : 'connecting');
    let socket: SocketLike;
    try {
      socket = this.opts.createSocket(this.url());
    } catch {
      this.scheduleReconnect();
      return;
    }
    this.socket = socket;
    socket.onopen = () => {
      if (this.socket !== socket) return;
      this.failures = 0;
      this.notice = null;
      this.setStatus('open');
      if (this.watching) this.send({ type: 'watch', runId: this.watching });
    };
    socket.onmessage = (ev) => {
      if (this.socket !== socket) return;
      this.armHeartbeat();
      this.handleRaw(ev.data);
    };
    socket.onerror = () => {
      // onclose follows and schedules the reconnect.
    };
    socket.onclose = (ev) => {
      if (this.socket !== socket) return;
      this.socket = null;
      this.clearHeartbeat();
      const { code, reason } = (ev ?? {}) as { code?: number; reason?: string };
      if (code === STREAM_CLOSE.sessionEnded || code === STREAM_CLOSE.tooManyConnections) this.notice = reason || null;
      if (code === STREAM_CLOSE.sessionEnded) {
        // The session is over: reconnecting would only be refused. The next sign-in starts afresh.
        this.failures = 0;
        this.setStatus('signed-out');
      } else if (this.users > 0) this.scheduleReconnect();
      else this.setStatus('closed');
    };
  }

  private handleRaw(data: unknown): void {
    let json: unknown;
    try {
      json = JSON.parse(typeof data === 'string' ? data : String(data));
    } catch {
      this.rejected += 1;
      return;
    }
    const parsed = StreamMessageSchema.safeParse(json);
    if (!parsed.success) {
      this.rejected += 1;
      return;
    }
    const m = parsed.data;
    if (m.type === 'lines.acked') {
      // An acknowledgement to this page's Web Serial bridge: not part of the numbered stream.
      for (const l of [...this.listeners]) l(m);
      return;
    }
    if (m.type === 'stream.opened') {
      this.heartbeatMs = m.heartbeatMs;
      this.armHeartbeat();
      // A new epoch numbers afresh from where the server starts this connection.
      if (this.lastSeq === null || m.epoch !== this.epoch) this.lastSeq = m.seq;
      this.epoch = m.epoch;
    } else if (m.type === 'stream.reset') {
      this.lastSeq = m.seq;
      this.epoch = m.epoch;
    } else {
      // A resumed connection may repeat what we already have; keep order, drop repeats.
      if (this.lastSeq !== null && m.seq <= this.lastSeq) return;
      this.lastSeq = m.seq;
    }
    for (const l of [...this.listeners]) l(m);
  }

  /** No message (heartbeats included) for 2.5 heartbeats: the connection is dead; reconnect. */
  private armHeartbeat(): void {
    this.clearHeartbeat();
    if (!(this.heartbeatMs > 0)) return;
    this.heartbeatTimer = this.opts.setTimer(() => {
      const s = this.socket;
      if (!s) return;
      this.socket = null;
      try {
        s.close(4000, 'heartbeat missed');
      } catch {
        // already closed
      }
      if (this.users > 0) this.scheduleReconnect();
    }, this.heartbeatMs * 2.5);
  }

  private clearHeartbeat(): void {
    if (this.heartbeatTimer !== null) this.opts.clearTimer(this.heartbeatTimer);
    this.heartbeatTimer = null;
  }

  private scheduleReconnect(): void {
    this.failures += 1;
    this.setStatus('reconnecting');
    const base = backoffDelay(this.failures, { initialMs: this.opts.initialBackoffMs, maxMs: this.opts.maxBackoffMs });
    const delay = base * (1 + this.opts.jitter * this.opts.random());
    this.clearReconnect();
    this.reconnectTimer = this.opts.setTimer(() => {
      this.reconnectTimer = null;
      if (this.users > 0) this.connect();
    }, delay);
  }

  private clearReconnect(): void {
    if (this.reconnectTimer !== null) this.opts.clearTimer(this.reconnectTimer);
    this.reconnectTimer = null;
  }

  private shutdown(): void {
    this.clearReconnect();
    this.clearHeartbeat();
    const s = this.socket;
    this.socket = null;
    this.failures = 0;
    s?.close(1000, 'done');
    if (this.status !== 'signed-out') this.setStatus('closed');
  }
}

let singleton: LiveStream | null = null;
let boundClient: QueryClient | null = null;
let unbind: (() => void) | null = null;

/** The page's one stream. */
export function getLiveStream(): LiveStream {
  singleton ??= new LiveStream();
  return singleton;
}

/** Routes the stream's messages into `queryClient` (once per client). */
function bindQueryClient(stream: LiveStream, queryClient: QueryClient): void {
  if (boundClient === queryClient) return;
  unbind?.();
  boundClient = queryClient;
  const stopMessages = stream.subscribe((m) => applyStreamMessage(m, queryClient));
  // Signed out by the server: re-check the session, whose 401 sends the page to sign in.
  const stopStatus = stream.subscribeStatus(() => {
    if (stream.getStatus() === 'signed-out') void queryClient.invalidateQueries({ queryKey: queryKeys.auth });
  });
  unbind = () => {
    stopMessages();
    stopStatus();
  };
}

/** The server's reason for closing the stream (e.g. "Signed out: your role changed; sign in again"), or null. */
export function useLiveStreamNotice(): string | null {
  const stream = getLiveStream();
  useSyncExternalStore(stream.subscribeStatus, stream.getStatus, stream.getStatus);
  return stream.getNotice();
}

/**
 * Keeps the live stream open while the calling component is mounted; with `runId`, asks for
 * that run's events. Returns the connection status.
 */
export function useLiveStream(queryClient: QueryClient, runId?: string | null): LiveStatus {
  const stream = getLiveStream();
  useEffect(() => {
    bindQueryClient(stream, queryClient);
    return stream.acquire();
  }, [stream, queryClient]);
  useEffect(() => {
    if (runId === undefined) return;
    stream.watch(runId);
    return () => stream.watch(null);
  }, [stream, runId]);
  return useSyncExternalStore(stream.subscribeStatus, stream.getStatus, stream.getStatus);
}
