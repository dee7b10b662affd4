import { z } from 'zod';
import { PointFlagSchema, PointStateSchema, RunStatusSchema } from './runs';

/**
 * WebSocket messages of `/ws` (server → browser), a union discriminated on `type`. Types
 * use the same strings as the server's events ('<noun>.<past-verb>'). Every message has a
 * sequence number; `GET /ws?since=SEQ` resumes after SEQ without gaps.
 */
const base = { seq: z.number().int().nonnegative() };

export const DeviceSchema = z.enum(['pressure', 'current']);

export const StreamMessageSchema = z.discriminatedUnion('type', [
  z.object({ type: z.literal('stream.opened'), ...base, latestSeq: z.number().int(), heartbeatMs: z.number() }),
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
    kind: z.enum(['leak', 'overshoot', 'unstable', 'disconnect', 'ne43', 'clock']),
    message: z.string(),
    /** Leak rate, % of span per minute, for a leak. */
    ratePctSpanPerMin: z.number().nullable(),
  }),
  z.object({ type: z.literal('point.captured'), ...base, runId: z.string(), index: z.number().int(), manual: z.boolean() }),
  z.object({ type: z.literal('run.changed'), ...base, runId: z.string(), status: RunStatusSchema, currentIndex: z.number().int().nullable() }),
  /** Sent when `since` is older than anything kept: the client should refetch server state. */
  z.object({ type: z.literal('stream.resynced'), ...base, fromSeq: z.number().int() }),
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
    lines: z.array(z.object({ device: DeviceSchema, raw: z.string().max(512), wallMs: z.number() })).max(500),
  }),
]);
export type ClientMessage = z.infer<typeof ClientMessageSchema>;
