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
    kind: z.enum(['leak', 'overshoot', 'unstable', 'disconnect', 'ne43']),
    message: z.string(),
    /** Leak rate, % of span per minute, for a leak. */
    ratePctSpanPerMin: z.number().nullable(),
  }),
  z.object({ type: z.literal('point.captured'), ...base, runId: z.string(), index: z.number().int(), manual: z.boolean() }),
  z.object({ type: z.literal('run.changed'), ...base, runId: z.string(), status: RunStatusSchema, currentIndex: z.number().int().nullable() }),
  /** Sent when `since` is older than anything kept: the client should refetch server state. */
  z.object({ type: z.literal('stream.resynced'), ...base, fromSeq: z.number().int() }),
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
