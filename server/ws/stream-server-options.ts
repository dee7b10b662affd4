import type http from 'node:http';
import type { Logger } from 'pino';
import type { AuthService } from '../services/auth.service';
import type { BenchRegistry } from '../services/bench-registry.service';
import type { BenchService } from '../services/bench.service';
import type { ForwardService } from '../services/forward.service';
import type { SessionEvents } from '../services/session-events';

/** Options of {@link attachStreamServer}. */
export interface StreamServerOptions {
  server: http.Server;
  auth: AuthService;
  bench: BenchService;
  /** Ended sessions (sign-out, deactivation, role change, revocation): their sockets are closed. */
  sessionEvents: SessionEvents;
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
  /** Most messages one resume replays; a client further behind gets `stream.reset`. Default 20 000. */
  maxReplay?: number;
  /** Messages per replay page. Default 100. */
  replayPageSize?: number;
  /**
   * Replays rest this many times the time their pages took to send, across the process, so a
   * replay storm leaves the event loop free for HTTP (replay-pacer.ts). Default 8.
   */
  replayRestFactor?: number;
  /** Upgrades authenticated at once (each asks the database); the others wait in arrival order. Default 2. */
  maxUpgradesAtOnce?: number;
  /** Upgrades that may wait for authentication; one more is refused with 503. Default 500. */
  maxUpgradesWaiting?: number;
  /** Upgrades from one client address that may wait; one more from it is refused with 503. Default 50. */
  maxUpgradesWaitingPerAddress?: number;
  /**
   * The key the upgrades of a client are counted under: its address as the HTTP side derives it
   * (TRUST_PROXY respected; server/http/client-address.ts); undefined for one not limited by
   * address. Default: the socket's remote address.
   */
  clientAddress?: (req: http.IncomingMessage) => string | undefined;
  /** A replay sends its next page once the socket has fewer buffered bytes than this. Default 64 KiB. */
  replayLowWaterBytes?: number;
  /** A replay whose socket does not drain for this long is dropped, ms. Default 30 000. */
  replayStallMs?: number;
  /** Resumes replaying at once in the process, and per account. Defaults 2 and 1. */
  maxReplays?: number;
  maxReplaysPerUser?: number;
  /** Open sockets per account; one more is closed with 4429. Default 10. */
  maxConnectionsPerUser?: number;
}

