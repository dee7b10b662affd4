import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { api } from '../../../lib/api-client';

/** What the simulated rig is doing (GET /api/sim, admin, BENCH=sim). Only the fields shown. */
export const SimSnapshotSchema = z
  .object({
    unit: z.string(),
    appliedDp: z.number(),
    currentMa: z.number(),
    transmitter: z
      .object({
        lrv: z.number(),
        urv: z.number(),
        outputMode: z.string(),
        zeroErrorPct: z.number(),
        spanErrorPct: z.number(),
        nonLinearityPct: z.number(),
        hysteresisPct: z.number(),
        outputNoiseMa: z.number(),
        failure: z.enum(['none', 'low', 'high']),
      })
      .passthrough(),
    sourceConfig: z.object({ noise: z.number(), overshoot: z.number(), leakPerMin: z.number(), timeConstantS: z.number() }).passthrough(),
    autopilot: z.object({ index: z.number(), phase: z.string(), points: z.number() }).optional().nullable(),
    devices: z.object({ pressure: z.object({ path: z.string(), plugged: z.boolean() }).passthrough(), current: z.object({ path: z.string(), plugged: z.boolean() }).passthrough() }),
  })
  .passthrough();
export type SimSnapshot = z.infer<typeof SimSnapshotSchema>;

/** Body of POST /api/sim (mirrors the simulator's control surface; every part optional). */
export interface SimControlBody {
  transmitter?: Partial<{ zeroErrorPct: number; spanErrorPct: number; nonLinearityPct: number; hysteresisPct: number; outputNoiseMa: number; failure: 'none' | 'low' | 'high' }>;
  source?: Partial<{ noise: number; overshoot: number; leakPerMin: number; timeConstantS: number }>;
  setpoint?: { value: number; overshoot?: number };
  faults?: Partial<Record<'pressure' | 'current', Partial<{ unplugged: boolean; garbage: boolean; lateReplyMs: number; dropReplies: number; overflow: boolean; burstBytes: number }>>>;
  autopilot?: 'stop' | { speed?: number; holdSeconds?: number; overshoot?: { fraction: number; points?: number[] }; leak?: { perMin: number; points?: number[] } };
}

const simKey = ['sim'] as const;

export function simQueryOptions(enabled: boolean) {
  return queryOptions({ queryKey: simKey, queryFn: ({ signal }) => api.get('/api/sim', { schema: SimSnapshotSchema, signal }), enabled, refetchInterval: 1_000 });
}

export function useSimSnapshot(enabled: boolean) {
  return useQuery(simQueryOptions(enabled));
}

export function useSimControl() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: SimControlBody) => api.post('/api/sim', body, { schema: SimSnapshotSchema }),
    onSuccess: (snap) => qc.setQueryData(simKey, snap),
  });
}
