import { and, asc, desc, eq, inArray, or, sql, type SQL } from 'drizzle-orm';
import type { Db } from '../client';
import { instruments, jobRevisions, jobs, points, recordSnapshots, returnReplies, runs, samples, signatures, sites, standards, users } from '../schema';
import { containsText } from './contains';
import { parsedRun } from './run.repository';

export type SignatureRow = typeof signatures.$inferSelect;
export type SignatureInsert = typeof signatures.$inferInsert;
export type RevisionRow = typeof jobRevisions.$inferSelect;
export type SnapshotRow = typeof recordSnapshots.$inferSelect;
export type ReplyRow = typeof returnReplies.$inferSelect;
export type RunRow = typeof runs.$inferSelect;
export type PointRow = typeof points.$inferSelect;
export type RunWithPoints = RunRow & { points: PointRow[] };
type JobBase = typeof jobs.$inferSelect;
export type RecordRow = JobBase & { tag: string; assigneeName: string | null };

/** Signatures, revisions, the runs of a job with their points, and the record lists. */
export function reviewRepository(db: Db) {
  const self = {
    async runsWithPoints(jobId: string): Promise<RunWithPoints[]> {
      const rs = await db.select().from(runs).where(eq(runs.jobId, jobId)).orderBy(asc(runs.startedAt));
      if (!rs.length) return [];
      const ps = await db
        .select()
        .from(points)
        .where(
          inArray(
            points.runId,
            rs.map((r) => r.id),
          ),
        )
        .orderBy(asc(points.index));
      return rs.map((r) => ({ ...parsedRun(r), points: ps.filter((p) => p.runId === r.id) }));
    },

    // ---- the frozen record (record_snapshots) and what it is built from ----

    /** The frozen record of one revision of a job, if it was submitted with one. */
    async snapshot(jobId: string, revision: number): Promise<SnapshotRow | undefined> {
      const [row] = await db
        .select()
        .from(recordSnapshots)
        .where(and(eq(recordSnapshots.jobId, jobId), eq(recordSnapshots.revision, revision)))
        .limit(1);
      return row;
    },

    /**
     * Submits a job and stores its frozen record in one transaction: the job moves to `submitted`
     * only from one of `fromStatus` at the same revision, and the snapshot of that revision is
     * written (a resubmission after a return replaces the earlier one). Returns false when the job
     * moved on meanwhile.
     */
    async submitWithSnapshot(
      values: { jobId: string; revision: number; snapshot: unknown; hash: string; frozenAt: Date },
      fromStatus: readonly string[],
      reply?: Omit<typeof returnReplies.$inferInsert, 'id' | 'jobId' | 'revision' | 'at'>,
    ): Promise<boolean> {
      return db.transaction(async (tx) => {
        const [moved] = await tx
          .update(jobs)
          .set({ status: 'submitted', updatedAt: values.frozenAt })
          .where(and(eq(jobs.id, values.jobId), eq(jobs.revision, values.revision), inArray(jobs.status, [...fromStatus] as Array<typeof jobs.$inferSelect.status>)))
          .returning({ id: jobs.id });
        if (!moved) return false;
        await tx
          .insert(recordSnapshots)
          .values(values)
          .onConflictDoUpdate({ target: [recordSnapshots.jobId, recordSnapshots.revision], set: { snapshot: values.snapshot, hash: values.hash, frozenAt: values.frozenAt } });
        // The reply to the return answered by this resubmission, in the same transaction.
        if (reply) await tx.insert(returnReplies).values({ ...reply, jobId: values.jobId, revision: values.revision, at: values.frozenAt });
        return true;
      });
    },

    /** Replies to returns of a job, oldest first. */
    async replies(jobId: string): Promise<ReplyRow[]> {
      return db.select().from(returnReplies).where(eq(returnReplies.jobId, jobId)).orderBy(asc(returnReplies.at));
    },

    /** Submitted jobs with tag, service, assignee and when their current revision was frozen, oldest submission first. */
    async inbox(): Promise<Array<{ id: string; tag: string; service: string; assigneeName: string | null; revision: number; submittedAt: Date; returns: number }>> {
      const rows = await db
        .select({
          id: jobs.id,
          tag: instruments.tag,
          service: instruments.service,
          assigneeName: users.name,
          revision: jobs.revision,
          frozenAt: recordSnapshots.frozenAt,
          updatedAt: jobs.updatedAt,
        })
        .from(jobs)
        .innerJoin(instruments, eq(instruments.id, jobs.instrumentId))
        .leftJoin(users, eq(users.id, jobs.assigneeId))
        .leftJoin(recordSnapshots, and(eq(recordSnapshots.jobId, jobs.id), eq(recordSnapshots.revision, jobs.revision)))
        .where(eq(jobs.status, 'submitted'));
      const returns = new Map<string, number>();
      if (rows.length) {
        const counted = await db
          .select({ jobId: signatures.jobId, n: sql<number>`count(*)::int` })
          .from(signatures)
          .where(and(inArray(signatures.jobId, rows.map((r) => r.id)), eq(signatures.decision, 'return')))
          .groupBy(signatures.jobId);
        for (const x of counted) returns.set(x.jobId, x.n);
      }
      return rows
        .map((r) => ({ id: r.id, tag: r.tag, service: r.service, assigneeName: r.assigneeName, revision: r.revision, submittedAt: r.frozenAt ?? r.updatedAt, returns: returns.get(r.id) ?? 0 }))
        .sort((a, b) => a.submittedAt.getTime() - b.submittedAt.getTime() || a.tag.localeCompare(b.tag));
    },

    /** Completed as-found and as-left runs of these jobs (kind, end, overall decision), oldest first. */
    async finishedRunsFor(jobIds: string[]): Promise<Array<{ jobId: string; kind: string; startedAt: Date; endedAt: Date | null; decision: string | null }>> {
      if (!jobIds.length) return [];
      const rows = await db
        .select()
        .from(runs)
        .where(and(inArray(runs.jobId, jobIds), eq(runs.status, 'complete'), inArray(runs.kind, ['as-found', 'as-left'])))
        .orderBy(asc(runs.startedAt));
      return rows.map(parsedRun).map((r) => ({ jobId: r.jobId, kind: r.kind, startedAt: r.startedAt, endedAt: r.endedAt, decision: r.results?.overallDecision ?? null }));
    },

    /** Stores the frozen record of a revision that was submitted before records were frozen (signed at review). */
    async saveSnapshot(values: { jobId: string; revision: number; snapshot: unknown; hash: string; frozenAt: Date }): Promise<void> {
      await db
        .insert(recordSnapshots)
        .values(values)
        .onConflictDoUpdate({ target: [recordSnapshots.jobId, recordSnapshots.revision], set: { snapshot: values.snapshot, hash: values.hash, frozenAt: values.frozenAt } });
    },

    async instrumentRow(id: string): Promise<typeof instruments.$inferSelect | undefined> {
      const [row] = await db.select().from(instruments).where(eq(instruments.id, id)).limit(1);
      return row;
    },
    async standardRows(ids: string[]): Promise<Array<typeof standards.$inferSelect>> {
      if (!ids.length) return [];
      return db.select().from(standards).where(inArray(standards.id, ids));
    },
    async site(): Promise<typeof sites.$inferSelect | undefined> {
      const [row] = await db.select().from(sites).limit(1);
      return row;
    },
    async userNames(ids: string[]): Promise<Map<string, string>> {
      const real = ids.filter((id) => /^[0-9a-f-]{36}$/i.test(id));
      if (!real.length) return new Map();
      const rows = await db.select({ id: users.id, name: users.name }).from(users).where(inArray(users.id, real));
      return new Map(rows.map((r) => [r.id, r.name]));
    },
    async userNamesByEmail(emails: string[]): Promise<Map<string, string>> {
      if (!emails.length) return new Map();
      const rows = await db.select({ email: users.email, name: users.name }).from(users).where(inArray(users.email, emails));
      return new Map(rows.map((r) => [r.email, r.name]));
    },

    async signatures(jobId: string): Promise<SignatureRow[]> {
      return db.select().from(signatures).where(eq(signatures.jobId, jobId)).orderBy(asc(signatures.signedAt));
    },

    async revisions(jobId: string): Promise<RevisionRow[]> {
      return db.select().from(jobRevisions).where(eq(jobRevisions.jobId, jobId)).orderBy(asc(jobRevisions.revision));
    },

    async revision(jobId: string, revision: number): Promise<RevisionRow | undefined> {
      const [row] = await db
        .select()
        .from(jobRevisions)
        .where(and(eq(jobRevisions.jobId, jobId), eq(jobRevisions.revision, revision)))
        .limit(1);
      return row;
    },

    async userName(id: string): Promise<string | undefined> {
      const [row] = await db.select({ name: users.name }).from(users).where(eq(users.id, id)).limit(1);
      return row?.name;
    },

    /**
     * Signs the job in one transaction: the signature row, the job's new status (only if it is still
     * `expectStatus` at the same revision, so two leads cannot both sign), and, on approval, the
     * instrument's last calibration date. Returns undefined when the job moved on meanwhile.
     */
    async sign(
      sig: Omit<SignatureInsert, 'id'>,
      change: { status: 'approved' | 'returned'; expectStatus: 'submitted'; instrumentId: string; calibratedOn: string | null },
    ): Promise<{ signature: SignatureRow; previousCalibratedOn: string | null } | undefined> {
      return db.transaction(async (tx) => {
        const [moved] = await tx
          .update(jobs)
          .set({ status: change.status, updatedAt: new Date() })
          .where(and(eq(jobs.id, sig.jobId), eq(jobs.status, change.expectStatus), eq(jobs.revision, sig.revision)))
          .returning({ id: jobs.id });
        if (!moved) return undefined;
        const [signature] = await tx.insert(signatures).values(sig).returning();
        const [inst] = await tx.select({ last: instruments.lastCalibratedOn }).from(instruments).where(eq(instruments.id, change.instrumentId));
        if (change.calibratedOn) {
          await tx.update(instruments).set({ lastCalibratedOn: change.calibratedOn, updatedAt: new Date() }).where(eq(instruments.id, change.instrumentId));
        }
        return { signature: signature!, previousCalibratedOn: inst?.last ?? null };
      });
    },

    /** Keeps the approved revision's snapshot and reopens the job at revision + 1, atomically. */
    async openRevision(values: Omit<typeof jobRevisions.$inferInsert, 'id' | 'createdAt'>): Promise<RevisionRow | undefined> {
      return db.transaction(async (tx) => {
        const [moved] = await tx
          .update(jobs)
          .set({ status: 'in-progress', revision: values.revision + 1, updatedAt: new Date() })
          .where(and(eq(jobs.id, values.jobId), eq(jobs.status, 'approved'), eq(jobs.revision, values.revision)))
          .returning({ id: jobs.id });
        if (!moved) return undefined;
        const [row] = await tx.insert(jobRevisions).values(values).returning();
        return row;
      });
    },

    /** Submitted and approved jobs (and any with revisions), newest first. */
    async records(opts: { status: 'approved' | 'submitted' | 'all'; q?: string }): Promise<RecordRow[]> {
      const where: SQL[] = [];
      if (opts.status === 'all') where.push(or(inArray(jobs.status, ['submitted', 'approved']), sql`${jobs.revision} > 1`)!);
      else where.push(eq(jobs.status, opts.status));
      if (opts.q) where.push(containsText([instruments.tag, instruments.service], opts.q)!);
      const rows = await db
        .select({ job: jobs, tag: instruments.tag, assigneeName: users.name })
        .from(jobs)
        .innerJoin(instruments, eq(instruments.id, jobs.instrumentId))
        .leftJoin(users, eq(users.id, jobs.assigneeId))
        .where(and(...where))
        .orderBy(desc(jobs.updatedAt))
        .limit(500);
      return rows.map((r) => ({ ...r.job, tag: r.tag, assigneeName: r.assigneeName }));
    },

    async signaturesFor(jobIds: string[]): Promise<SignatureRow[]> {
      if (!jobIds.length) return [];
      return db.select().from(signatures).where(inArray(signatures.jobId, jobIds)).orderBy(asc(signatures.signedAt));
    },

    async revisionCounts(jobIds: string[]): Promise<Map<string, number>> {
      if (!jobIds.length) return new Map();
      const rows = await db
        .select({ jobId: jobRevisions.jobId, n: sql<number>`count(*)::int` })
        .from(jobRevisions)
        .where(inArray(jobRevisions.jobId, jobIds))
        .groupBy(jobRevisions.jobId);
      return new Map(rows.map((r) => [r.jobId, r.n]));
    },

    /** Approved jobs of an instrument with their runs (for drift), oldest first. */
    async approvedJobsWithRuns(instrumentId: string): Promise<Array<JobBase & { runs: RunRow[] }>> {
      const js = await db
        .select()
        .from(jobs)
        .where(and(eq(jobs.instrumentId, instrumentId), eq(jobs.status, 'approved')))
        .orderBy(asc(jobs.dueOn));
      if (!js.length) return [];
      const rs = await db
        .select()
        .from(runs)
        .where(
          inArray(
            runs.jobId,
            js.map((j) => j.id),
          ),
        )
        .orderBy(asc(runs.startedAt));
      return js.map((j) => ({ ...j, runs: rs.filter((r) => r.jobId === j.id).map(parsedRun) }));
    },

    /** Job ids that are open (not approved) per instrument. */
    async openJobInstrumentIds(): Promise<Set<string>> {
      const rows = await db
        .select({ id: jobs.instrumentId })
        .from(jobs)
        .where(inArray(jobs.status, ['open', 'in-progress', 'submitted', 'returned']));
      return new Set(rows.map((r) => r.id));
    },

    // ---- CSV import: every row in one transaction, rows returned for the audit trail ----

    async insertInstruments(values: Array<typeof instruments.$inferInsert>): Promise<Array<typeof instruments.$inferSelect>> {
      if (!values.length) return [];
      return db.transaction(async (tx) => tx.insert(instruments).values(values).returning());
    },
    async insertStandards(values: Array<typeof standards.$inferInsert>): Promise<Array<typeof standards.$inferSelect>> {
      if (!values.length) return [];
      return db.transaction(async (tx) => tx.insert(standards).values(values).returning());
    },

    // ---- demo history and benchmarks: write completed work directly ----

    /** Raw samples in batches (benchmarks and demo traces). */
    async insertSamples(values: Array<typeof samples.$inferInsert>): Promise<void> {
      for (let i = 0; i < values.length; i += 5000) await db.insert(samples).values(values.slice(i, i + 5000));
    },
    async maxSampleSeq(): Promise<number> {
      const [row] = await db.select({ m: sql<number>`coalesce(max(${samples.seq}), 0)::bigint` }).from(samples);
      return Number(row?.m ?? 0);
    },

    async insertJob(values: typeof jobs.$inferInsert): Promise<JobBase> {
      const [row] = await db.insert(jobs).values(values).returning();
      return row!;
    },
    async insertRun(values: typeof runs.$inferInsert, pts: Array<Omit<typeof points.$inferInsert, 'runId'>>): Promise<RunRow> {
      return db.transaction(async (tx) => {
        const [run] = await tx.insert(runs).values(values).returning();
        if (pts.length) await tx.insert(points).values(pts.map((p) => ({ ...p, runId: run!.id })));
        return run!;
      });
    },
    async insertSignature(values: SignatureInsert): Promise<void> {
      await db.insert(signatures).values(values);
    },
  };
  return self;
}
export type ReviewRepository = ReturnType<typeof reviewRepository>;
