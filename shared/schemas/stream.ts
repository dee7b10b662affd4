import { z } from 'zod';
import { PointCaptureSchema, PointFlagSchema, PointStateSchema, RunStatusSchema } from './runs';

/**
 * The capture path's event map: one shape per event, from the source that raises it to the
 * browser that applies it. The bench hub and the capture engine raise these events (unnumbered);
 * the run service stores what they change; the hub then numbers them (`seq`) into the stream that
 * `/ws` sends and the client applies. Types use the server's event names ('<noun>.<past-verb>').
 * Every server start opens a new stream epoch; `GET /ws?since=SEQ&epoch=E` resumes after SEQ
 * without gaps within epoch E and answers anything else with `stream.reset`. Sequence numbers are
 * never reused, across epochs either.
 * Add an event by adding an entry here and its `numbered(...)` line to `StreamMessageSchema` below;
 * the types follow.
 */
export const DeviceSchema = z.enum(['pressure', 'current']);

/** Stream epoch: a new one at every server start (`stream.opened`, `stream.reset`, `?epoch=`). */
export const StreamEpochSchema = z.string().regex(/^[A-Za-z0-9_-]{1,40}$/);

/**
 * Why a resume was not served and the client must re-read server state over HTTP: `epoch` the
 * server restarted (or the client named no epoch); `ahead` `since` is beyond the latest seq;
 * `behind` more was missed than one resume replays (or than the server keeps); `unavailable`
 * the stored samples could not be read.
 */
export const StreamResetReasonSchema = z.enum(['epoch', 'ahead', 'behind', 'unavailable']);
export type StreamResetReason = z.infer<typeof StreamResetReasonSchema>;

/**
 * Close codes of `/ws` besides the standard ones (4000–4999 are the application's, RFC 6455
 * §7.4.2), each with a reason the client shows. `sessionEnded`: the session is over (sign-out,
 * deactivation, role change, revocation, expiry); the client stops reconnecting.
 * `tooManyConnections`: the account has too many sockets open; the client retries later.
 */
export const STREAM_CLOSE = { sessionEnded: 4401, tooManyConnections: 4429 } as const;


const HoldProgressSchema = z.object({ elapsedMs: z.number(), requiredMs: z.number() });

export const StreamEventSchemas = {
  /** First message: `seq` is where this connection starts (the resume point, or the latest seq). */
  'stream.opened': z.object({ type: z.literal('stream.opened'), latestSeq: z.number().int(), heartbeatMs: z.number(), epoch: StreamEpochSchema }),
  'sample.received': z.object({
    type: z.literal('sample.received'),
    benchId: z.string(),
    device: DeviceSchema,
    value: z.number().nullable(),
    unit: z.string().nullable(),
    raw: z.string(),
    wallMs: z.number(),
    runId: z.string().nullable(),
  }),
  'device.connected': z.object({ type: z.literal('device.connected'), benchId: z.string(), device: DeviceSchema, path: z.string(), at: z.number() }),
  'device.disconnected': z.object({ type: z.literal('device.disconnected'), benchId: z.string(), device: DeviceSchema, path: z.string(), at: z.number(), reason: z.string() }),
  /** A point's state or flags changed (stored), or hold progress (live only, not stored). */
  'point.changed': z.object({
    type: z.literal('point.changed'),
    runId: z.string(),
    index: z.number().int(),
    state: PointStateSchema,
    flags: z.array(PointFlagSchema),
    /** Hold progress while holding: elapsed and required ms (live, never stored). */
    hold: HoldProgressSchema.nullable(),
    /** The point's latest warning text, if any (live). */
    warning: z.string().nullable().optional(),
  }),
  'run.warned': z.object({
    type: z.literal('run.warned'),
    runId: z.string(),
    index: z.number().int(),
    /** `overrange`: the applied DP went past the URV by more than the site's margin (protect the transmitter). */
    kind: z.enum(['leak', 'overshoot', 'unstable', 'disconnect', 'ne43', 'clock', 'overrange']),
    message: z.string(),
    /** Leak rate, % of span per minute, for a leak. */
    ratePctSpanPerMin: z.number().nullable(),
  }),
  /** A point was captured; sent only once the capture is stored. Carries the capture and who or what took it. */
  'point.captured': z.object({
    type: z.literal('point.captured'),
    runId: z.string(),
    benchId: z.string(),
    index: z.number().int(),
    manual: z.boolean(),
    flags: z.array(PointFlagSchema),
    capture: PointCaptureSchema,
  }),
  'run.changed': z.object({ type: z.literal('run.changed'), runId: z.string(), status: RunStatusSchema, currentIndex: z.number().int().nullable() }),
  /**
   * The resume from `fromSeq` was not served (see {@link StreamResetReasonSchema}): the stream goes
   * on live after `seq` in `epoch`, and the client re-reads runs, jobs and the bench over HTTP.
   */
  'stream.reset': z.object({ type: z.literal('stream.reset'), epoch: StreamEpochSchema, fromSeq: z.number().int(), reason: StreamResetReasonSchema }),
} as const;

type EventSchemas = typeof StreamEventSchemas;
export type StreamEventType = keyof EventSchemas;
/** An event of the capture path before the hub numbers it. */
export type StreamEvent = { [K in StreamEventType]: z.infer<EventSchemas[K]> }[StreamEventType];
/** The event of one type. */
export type StreamEventOf<K extends StreamEventType> = z.infer<EventSchemas[K]>;
/** What the capture engine raises about a run. */
export type RunEvent = StreamEventOf<'point.changed' | 'run.warned' | 'point.captured' | 'run.changed'>;

/**
 * WebSocket messages of `/ws` (server → browser): the events above, each with its sequence number,
 * a union discriminated on `type`.
 */
const seq = { seq: z.number().int().nonnegative() };
const numbered = <K extends StreamEventType>(k: K) => StreamEventSchemas[k].extend(seq);

export const StreamMessageSchema = z.discriminatedUnion('type', [
  numbered('stream.opened'),
  numbered('sample.received'),
  numbered('device.connected'),
  numbered('device.disconnected'),
  numbered('point.changed'),
  numbered('run.warned'),
  numbered('point.captured'),
  numbered('run.changed'),
  numbered('stream.reset'),
  /**
   * To the sender only, not part of the numbered stream (`seq` is always 0): the sender's batches up
   * to `batchSeq` are settled, so it may forget them. `stored` once their lines are durably stored
   * (journal-synced), `duplicate` for a batch already stored before, `refused` with the reason.
   */
  z.object({
    type: z.literal('lines.acked'),
    seq: z.literal(0),
    senderId: z.string(),
    batchSeq: z.number().int(),
    status: z.enum(['stored', 'duplicate', 'refused']),
    /** Lines of the batch stored now (0 for a duplicate or a refusal). */
    stored: z.number().int(),
    reason: z.string().nullable(),
  }),
]);
export type StreamMessage = z.infer<typeof StreamMessageSchema>;
export type StreamMessageType = StreamMessage['type'];
/** A numbered message of one type. */
export type StreamMessageOf<K extends StreamMessageType> = Extract<StreamMessage, { type: K }>;

/** Browser → server. */
export const ClientMessageSchema = z.discriminatedUnion('type', [
  z.object({ type: z.literal('watch'), runId: z.string().nullable() }),
  /**
   * A batch of raw lines read by a bench agent or in the browser (Web Serial), forwarded to the
   * bench hub. `senderId` names the sending queue (stable across an agent's restarts), `batchSeq`
   * numbers its batches from 1 (a resend keeps its number; the server answers `lines.acked` and
   * stores a batch once), `sentWallMs` is the sender's clock when it sent the batch. Line and send
   * times are the sender's clock: metadata, never the time base of holds.
   */
  z.object({
    type: z.literal('lines.forwarded'),
    benchId: z.string().max(80),
    senderId: z.string().regex(/^[A-Za-z0-9_-]{1,64}$/),
    batchSeq: z.number().int().min(1).max(Number.MAX_SAFE_INTEGER),
    sentWallMs: z.number(),
    // A raw line up to 16 384 characters passes the message contract (a message is at most 64 KiB)
    // so that an overlong line is refused and counted at the edge check (shared/protocol
    // clean-line.ts, at most 256 characters), not dropped with its whole batch unseen.
    lines: z.array(z.object({ device: DeviceSchema, raw: z.string().max(16_384), wallMs: z.number() })).max(500),
  }),
]);
export type ClientMessage = z.infer<typeof ClientMessageSchema>;
