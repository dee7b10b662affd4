import { eq } from 'drizzle-orm';
import type { HartMismatch, HartReading, HartTrim, HartWrite, JobHart } from '../../../shared/schemas/hart-job';
import type { Db } from '../client';
import { jobHart } from '../schema';

/** A job's stored HART record, typed. */
export interface JobHartRow {
  jobId: string;
  asFound: HartReading | null;
  asLeft: HartReading | null;
  mismatches: HartMismatch[];
  resolution: JobHart['resolution'];
  writes: HartWrite[];
  trims: HartTrim[];
}

const EMPTY = (jobId: string): JobHartRow => ({ jobId, asFound: null, asLeft: null, mismatches: [], resolution: null, writes: [], trims: [] });

export function hartRepository(db: Db) {
  return {
    async get(jobId: string): Promise<JobHartRow> {
      const [row] = await db.select().from(jobHart).where(eq(jobHart.jobId, jobId)).limit(1);
      if (!row) return EMPTY(jobId);
      return {
        jobId,
        asFound: (row.asFound ?? null) as HartReading | null,
        asLeft: (row.asLeft ?? null) as HartReading | null,
        mismatches: (row.mismatches ?? []) as HartMismatch[],
        resolution: (row.resolution ?? null) as JobHart['resolution'],
        writes: (row.writes ?? []) as HartWrite[],
        trims: (row.trims ?? []) as HartTrim[],
      };
    },
    /** Stores the given fields (creating the row on first use). */
    async put(jobId: string, patch: Partial<Omit<JobHartRow, 'jobId'>>): Promise<void> {
      const values = { ...patch, updatedAt: new Date() };
      await db
        .insert(jobHart)
        .values({ jobId, ...values })
        .onConflictDoUpdate({ target: jobHart.jobId, set: values });
    },
  };
}
export type HartRepository = ReturnType<typeof hartRepository>;
