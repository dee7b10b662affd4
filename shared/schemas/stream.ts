import { z } from 'zod';
import { PointFlagSchema, PointStateSchema, RunStatusSchema } from './runs';

/**
 * WebSocket messages of `/ws` (server → browser), a union discriminated on `type`. Types
 * use the same strings as the server's events ('<noun>.<past-verb>'). Every message has a
 * sequence number, and every server start a new stream epoch; `GET /ws?since=SEQ&epoch=E`
 * resumes after SEQ without gaps within epoch E, and answers anything else with `stream.reset`.
 * Sequence numbers are never reused, across epochs either.
 */
const base = { seq: z.number().int().nonnegative() };

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

export const DeviceSchema = z.enum(['pressure', 'current']);

export const StreamMessageSchema = z.discriminatedUnion('type', [
  /** First message: `seq` is where this connection starts (the resume point, or the latest seq). */
  z.object({ type: z.literal('stream.opened'), ...base, latestSeq: z.number().int(), heartbeatMs: z.number(), epoch: StreamEpochSchema }),
  z.object({
    type: z.literal('sample.received'),
    ...base,
    benchId: z.string(),
    device: DeviceSchema,
    value: z.number().nullable(),
    unit: z.string().nullable(),
    raw: z.string(),
    wallMs: z.number(),
    runId: z.string().nullable(),
  }),
  z.object({ type: z.literal('device.connected'), ...base, benchId: z.string(), device: DeviceSchema, path: z.string(), at: z.number() }),
  z.object({ type: z.literal('device.disconnected'), ...base, benchId: z.string(), device: DeviceSchema, path: z.string(), at: z.number(), reason: z.string() }),
  z.object({
    type: z.literal('point.changed'),
    ...base,
    runId: z.string(),
    index: z.number().int(),
    state: PointStateSchema,
    flags: z.array(PointFlagSchema),
    /** Hold progress while holding: elapsed and required ms. */
    hold: z.object({ elapsedMs: z.number(), requiredMs: z.number() }).nullable(),
  }),
  z.object({
    type: z.literal('run.warned'),
    ...base,
    runId: z.string(),
    index: z.number().int(),
    kind: z.enum(['leak', 'overshoot', 'unstable', 'disconnect', 'ne43']),
    message: z.string(),
    /** Leak rate, % of span per minute, for a leak. */
    ratePctSpanPerMin: z.number().nullable(),
  }),
  z.object({ type: z.literal('point.captured'), ...base, runId: z.string(), index: z.number().int(), manual: z.boolean() }),
  z.object({ type: z.literal('run.changed'), ...base, runId: z.string(), status: RunStatusSchema, currentIndex: z.number().int().nullable() }),
  /**
   * The resume from `fromSeq` was not served (see {@link StreamResetReasonSchema}): the stream goes
   * on live after `seq` in `epoch`, and the client re-reads runs, jobs and the bench over HTTP.
   */
  z.object({ type: z.literal('stream.reset'), ...base, epoch: StreamEpochSchema, fromSeq: z.number().int(), reason: StreamResetReasonSchema }),
]);
export type StreamMessage = z.infer<typeof StreamMessageSchema>;
export type StreamMessageType = StreamMessage['type'];

/** Browser → server. */
export const ClientMessageSchema = z.discriminatedUnion('type', [
  z.object({ type: z.literal('watch'), runId: z.string().nullable() }),
  /** Web Serial: a batch of raw lines read in the browser, forwarded to the bench hub. */
  z.object({
    type: z.literal('lines.forwarded'),
    benchId: z.string().max(80),
    lines: z.array(z.object({ device: DeviceSchema, raw: z.string().max(512), wallMs: z.number() })).max(500),
  }),
]);
export type ClientMessage = z.infer<typeof ClientMessageSchema>;
