import { queryOptions, useQuery } from '@tanstack/react-query';
import { z } from 'zod';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

const Counters = z.object({
  samples: z.number(),
  badLines: z.number(),
  /** Forwarded lines refused at the edge (control characters, overlong); absent from older servers. */
  edgeRefused: z.number().optional(),
  lastWallMs: z.number().nullable(),
  lastValue: z.number().nullable(),
  lastUnit: z.string().nullable(),
  connected: z.boolean(),
  path: z.string().nullable(),
  reason: z.string().nullable(),
});

const LocalDevice = z
  .object({
    path: z.string(),
    connected: z.boolean(),
    state: z.string(),
    /** Port settings, when the server reports them. */
    protocol: z.string().optional(),
    baudRate: z.number().optional(),
    stats: z
      .object({
        parser: z.object({ samples: z.number(), texts: z.number(), rejected: z.record(z.string(), z.number()), framer: z.object({ bytes: z.number(), lines: z.number(), dropped: z.record(z.string(), z.number()) }) }).partial(),
        queue: z.object({ sent: z.number(), replied: z.number(), timeouts: z.number(), badReplies: z.number() }).partial(),
        pollFailures: z.number(),
      })
      .partial()
      .optional(),
  })
  .passthrough();

/** The bench's HART modem (server/bench/hart-modem.ts `HartModemStatus`). */
const HartModem = z
  .object({
    path: z.string(),
    connected: z.boolean(),
    state: z.string(),
    modem: z.enum(['usb', 'rts']),
    baudRate: z.number(),
    protocol: z.string(),
    device: z.object({ deviceId: z.number(), expandedDeviceType: z.number(), universalRevision: z.number() }).nullable(),
    loopCurrentFixed: z.boolean(),
    deviceStatus: z.array(z.string()),
    lastCommand: z.object({ command: z.number(), name: z.string(), at: z.number(), outcome: z.enum(['ok', 'error']), responseCode: z.number().optional() }).nullable(),
    lastError: z.object({ code: z.string(), message: z.string(), at: z.number() }).nullable(),
    stats: z.object({ sent: z.number(), retries: z.number(), timeouts: z.number(), checksumErrors: z.number(), busy: z.number(), transactions: z.number(), errors: z.number() }).partial(),
  })
  .passthrough();
export type HartModemStatus = z.infer<typeof HartModem>;

/** GET /api/bench: devices and their state, counters and storage acknowledgement. */
export const BenchStatusSchema = z
  .object({
    mode: z.enum(['sim', 'serial']),
    benchId: z.string(),
    latestSeq: z.number(),
    ackedSeq: z.number().nullable().optional(),
    storedSeq: z.number().nullable().optional(),
    /** Samples not stored as received: refused at the edge, quarantined by the writer, damaged journal batches set aside. */
    storage: z
      .object({
        edgeRefused: z.number(),
        quarantined: z.object({ total: z.number(), unacknowledged: z.number() }),
        damagedBatches: z.object({ total: z.number(), unacknowledged: z.number() }),
      })
      .optional(),
    benches: z.array(
      z
        .object({
          benchId: z.string(),
          runId: z.string().nullable().optional(),
          activeRunId: z.string().nullable().optional(),
          devices: z.record(z.string(), Counters),
          local: z.object({ pressure: LocalDevice, current: LocalDevice, hart: HartModem.optional() }).nullable().optional(),
        })
        .passthrough(),
    ),
  })
  .passthrough();
export type BenchStatus = z.infer<typeof BenchStatusSchema>;

export function benchQueryOptions() {
  return queryOptions({
    queryKey: queryKeys.bench,
    queryFn: ({ signal }) => api.get('/api/bench', { schema: BenchStatusSchema, signal }),
    // Counters move all the time; device events from the stream refetch at once.
    refetchInterval: 2_000,
    staleTime: 1_000,
  });
}

export function useBench() {
  return useQuery(benchQueryOptions());
}
