/**
 * The raw trace of a run for review: every sample in a small window, or a min/mean/max envelope
 * per time bucket over a long one, with the whole-run view of a finished run kept in memory.
 */
import type { Db } from '../db/client';
import { traceRepository } from '../db/repositories/trace.repository';
import { notFound } from '../errors';
import type { ReviewTrace } from '../../shared/schemas/trace';

/** Whole-run traces kept in memory (a few runs under review at once). */
const OVERVIEW_CACHE = 16;
/** Defaults of the review trace query (ReviewTraceQuerySchema). */
export const TRACE_DEFAULTS = { buckets: 1200, maxRaw: 12_000 } as const;

export function createReviewTraces(db: Db) {
  const repo = traceRepository(db);

  async function computeTrace(
    runId: string,
    q: { from?: number; to?: number; buckets: number; maxRaw: number },
    span: { n: number; from: number | null; to: number | null },
  ): Promise<ReviewTrace> {
    if (span.from === null || span.to === null) {
      return { runId, mode: 'raw', t0: 0, from: 0, to: 0, span: { from: null, to: null }, total: 0, bucketMs: null, x: [], dp: { v: [] }, ma: { v: [] }, raw: [] };
    }
    const whole = q.from === undefined && q.to === undefined;
    const from = Math.max(q.from ?? span.from, span.from);
    const to = Math.max(from, Math.min(q.to ?? span.to, span.to));
    const t0 = Math.floor(from);
    const total = whole ? span.n : await repo.traceCount(runId, from, to);
    const spanOut = { from: span.from, to: span.to };
    if (total <= q.maxRaw) {
      const rows = total ? await repo.traceRaw(runId, from, to, q.maxRaw) : [];
      const x: number[] = [];
      const dp: Array<number | null> = [];
      const ma: Array<number | null> = [];
      const raw: string[] = [];
      for (const r of rows) {
        x.push(r.wallMs - t0);
        dp.push(r.device === 'pressure' ? r.value : null);
        ma.push(r.device === 'current' ? r.value : null);
        raw.push(r.raw);
      }
      return { runId, mode: 'raw', t0, from, to, span: spanOut, total, bucketMs: null, x, dp: { v: dp }, ma: { v: ma }, raw };
    }
    const bucketMs = Math.max(1, (to - from) / q.buckets);
    const rows = await repo.traceBuckets(runId, from, to, bucketMs);
    const index = new Map<number, number>();
    const x: number[] = [];
    const out = { dp: { v: [] as Array<number | null>, lo: [] as Array<number | null>, hi: [] as Array<number | null> }, ma: { v: [] as Array<number | null>, lo: [] as Array<number | null>, hi: [] as Array<number | null> } };
    for (const r of rows) {
      let k = index.get(r.b);
      if (k === undefined) {
        k = x.length;
        index.set(r.b, k);
        x.push(from - t0 + (r.b + 0.5) * bucketMs);
        for (const ch of [out.dp, out.ma]) {
          ch.v.push(null);
          ch.lo.push(null);
          ch.hi.push(null);
        }
      }
      const ch = r.device === 'pressure' ? out.dp : out.ma;
      ch.v[k] = r.mean === null ? null : Number(r.mean);
      ch.lo[k] = r.lo === null ? null : Number(r.lo);
      ch.hi[k] = r.hi === null ? null : Number(r.hi);
    }
    return { runId, mode: 'envelope', t0, from, to, span: spanOut, total, bucketMs, x, ...out };
  }

  const overviews = new Map<string, { version: string; value: Promise<ReviewTrace> }>();

  const traces = {
  /**
   * The raw trace of a run for review: every sample in a small window, or a min/mean/max
   * envelope per time bucket over a long one (computed in the database, so a one-hour run opens
   * fast). The whole-run view is kept per run while its samples do not change.
   */
  async trace(runId: string, q: { from?: number; to?: number; buckets: number; maxRaw: number }): Promise<ReviewTrace> {
    const state = await repo.runState(runId);
    if (!state) throw notFound('No such run');
    if (q.from === undefined && q.to === undefined) {
      // A completed run's samples no longer change: its whole-run view is kept until the run changes state.
      if (state.status !== 'running' && state.status !== 'paused') {
        const key = `${runId}|${q.buckets}|${q.maxRaw}`;
        const version = `${state.status}|${state.endedAt?.getTime() ?? ''}`;
        const hit = overviews.get(key);
        if (hit && hit.version === version) return hit.value;
        const value = repo.traceSpan(runId).then((span) => computeTrace(runId, q, span));
        overviews.set(key, { version, value });
        value.catch(() => overviews.delete(key));
        while (overviews.size > OVERVIEW_CACHE) overviews.delete(overviews.keys().next().value!);
        return value;
      }
    }
    return computeTrace(runId, q, await repo.traceSpan(runId));
  },

  /** Starts computing a run's whole-run trace so that the review page's request finds it ready. */
  warmTrace(runId: string): void {
    traces.trace(runId, TRACE_DEFAULTS).catch(() => {});
  },
  };
  return traces;
}
export type ReviewTraces = ReturnType<typeof createReviewTraces>;
