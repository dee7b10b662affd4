import type { Db } from '../db/client';
import { reviewRepository, type RunWithPoints } from '../db/repositories/review.repository';
import { AppError, conflict, forbidden, locked, notFound } from '../errors';
import type { JobDetail } from '../../shared/schemas/jobs';
import type {
  AuditEntry,
  FrozenRecord,
  Inbox,
  Revision,
  RevisionSummary,
  ReviewBundle,
  ReviewExchange,
  Signature,
} from '../../shared/schemas/records';
import type { AuditService } from './audit.service';
import type { AuthService, SessionUser } from './auth.service';
import { createSiteClock } from './site-clock';
import { dateInZone } from '../../shared/format/dates';
import type { JobService } from './job.service';
import type { RegisterService } from './register.service';
import { createRecordFreezer, frozenRecordHash } from './record-snapshot';
import { createRecordList } from './record-list';
import { summary, toSignature, toSnapshotRun } from './review-rows';
import { createReviewTraces } from './review-trace';

/** Something the review flow tells the team about (mail); never allowed to block or fail the action. */
export type ReviewNotice =
  | { kind: 'approved'; jobId: string; signature: Signature }
  | { kind: 'returned'; jobId: string; signature: Signature }
  | { kind: 'revision-opened'; jobId: string; revision: number; reason: string; byName: string };

export interface ReviewServiceDeps {
  audit: AuditService;
  auth: AuthService;
  jobs: JobService;
  registers: RegisterService;
  /** Called after a successful action; errors are swallowed. */
  notify?: (notice: ReviewNotice) => void | Promise<void>;
}

/** Ids of the people who performed the work: the assignee, whoever started a run or captured a point. */
function performerIds(job: JobDetail, runs: RunWithPoints[]): Set<string> {
  const ids = new Set<string>();
  if (job.assigneeId) ids.add(job.assigneeId);
  for (const r of runs) {
    if (r.startedBy) ids.add(r.startedBy);
    for (const p of r.points) {
      const by = (p.capture as { capturedBy?: unknown } | null)?.capturedBy;
      if (typeof by === 'string' && by) ids.add(by);
    }
  }
  return ids;
}

/** Calibration date of the record: the day the last completed as-left (or as-found) run ended. */
function calibrationDate(runs: RunWithPoints[], fallback: string, zone: string): string {
  const done = runs.filter((r) => r.status === 'complete' && (r.kind === 'as-left' || r.kind === 'as-found'));
  const last = done.at(-1);
  // The date in the site's zone: a run ending at 23:30 local time is calibrated that day, whatever UTC says.
  return last ? dateInZone(last.endedAt ?? last.startedAt, zone) : fallback;
}

export function createReviewService(db: Db, deps: ReviewServiceDeps) {
  const repo = reviewRepository(db);
  const { audit, auth, jobs } = deps;
  const freezer = createRecordFreezer(db, audit);
  const clock = createSiteClock(db);

  /**
   * The frozen record of the job's current revision and its hash. A job submitted before records
   * were frozen is frozen now, by the signer, from what stands (said so in the audit trail).
   */
  async function frozen(user: SessionUser, job: JobDetail) {
    const kept = await freezer.stored(job.id, job.revision);
    if (kept) return { record: kept.record, hash: frozenRecordHash(kept.record) };
    const at = new Date();
    const record = await freezer.build(job, { id: user.id, name: user.name }, at);
    const hash = frozenRecordHash(record);
    await repo.saveSnapshot({ jobId: job.id, revision: job.revision, snapshot: record, hash, frozenAt: at });
    await audit.record(user, 'job.record-frozen', 'job', job.id, undefined, { revision: job.revision, recordHash: hash, reason: 'submitted before records were frozen' });
    return { record, hash };
  }

  const tell = (n: ReviewNotice) => {
    try {
      void Promise.resolve(deps.notify?.(n)).catch(() => {});
    } catch {
      /* mail never blocks a signature */
    }
  };

  async function performers(job: JobDetail, runs: RunWithPoints[]) {
    const out: Array<{ id: string; name: string }> = [];
    for (const id of performerIds(job, runs)) {
      // capturedBy may hold a name rather than an id when written by a device-side process.
      const name = /^[0-9a-f-]{36}$/i.test(id) ? await repo.userName(id) : undefined;
      out.push({ id, name: name ?? id });
    }
    return out;
  }

  /** Why `user` may not sign the job now, or null. */
  function cannotSign(user: SessionUser, job: JobDetail, performed: Set<string>): { status: number; reason: string } | null {
    if (user.role !== 'lead') return { status: 403, reason: 'Only a lead signs off calibration records' };
    if (performed.has(user.id) || performed.has(user.name) || performed.has(user.email))
      return { status: 403, reason: 'You performed part of this work; another lead must sign it off' };
    if (job.status === 'approved') return { status: 423, reason: `Revision ${job.revision} is approved and locked; open a revision to correct it` };
    if (job.status !== 'submitted') return { status: 409, reason: `The job is ${job.status}; only a submitted job can be reviewed` };
    return null;
  }


  const traces = createReviewTraces(db);
  const service = {
    ...traces,
    ...createRecordList(db),
    /** Refuses (423) any change to a job whose current revision is approved. For run and capture services. */
    async assertEditable(jobId: string): Promise<void> {
      const j = await jobs.get(jobId);
      if (j.status === 'approved') throw locked(`Revision ${j.revision} of this record is approved and locked; a lead can open a revision to correct it`);
    },

    /** The review page's data: job, instrument, signatures, revisions, audit trail and who may sign. */
    async bundle(user: SessionUser, jobId: string): Promise<ReviewBundle> {
      const job = await jobs.detail(jobId);
      const [live, runs, sigs, revs, kept, replies] = await Promise.all([
        deps.registers.instruments.get(job.instrumentId),
        repo.runsWithPoints(jobId),
        repo.signatures(jobId),
        repo.revisions(jobId),
        freezer.stored(jobId, job.revision),
        repo.replies(jobId),
      ]);
      // A submitted or signed revision is reviewed against the instrument as it was used, not as the register stands now.
      const { id: _id, ...asUsed } = kept?.record.instrument ?? { id: '' };
      const instrument = { ...live, ...asUsed } as typeof live;
      const performed = performerIds(job, runs);
      const no = cannotSign(user, job, performed);
      // The certificates shown are those the frozen record cites, not whatever the register holds now.
      const cited = new Map((kept?.record.standards ?? []).map((s) => [s.id, s.certificateFileId] as const));
      const bundle: ReviewBundle = {
        job: { ...job, standards: job.standards.map((s) => (cited.has(s.id) ? { ...s, certificateFileId: cited.get(s.id) ?? null } : s)) },
        instrument,
        signatures: sigs.map(toSignature),
        revisions: revs.map(summary),
        audit: await service.trail(jobId, runs.map((r) => r.id)),
        performers: await performers(job, runs),
        canSign: !no,
        cannotSignReason: no?.reason ?? null,
        exchanges: sigs
          .filter((x) => x.decision === 'return')
          .map((x): ReviewExchange => {
            const r = replies.find((y) => y.signatureId === x.id);
            return {
              signatureId: x.id,
              revision: x.revision,
              comment: x.comment,
              returnedBy: x.signerName,
              returnedAt: x.signedAt.toISOString(),
              reply: r ? { text: r.reply, byName: r.byName, at: r.at.toISOString() } : null,
            };
          }),
      };
      // The page opens the first completed as-found run (else the first completed run): start its trace now.
      const first = runs.find((r) => r.status === 'complete' && r.kind === 'as-found') ?? runs.find((r) => r.status === 'complete');
      if (first) traces.warmTrace(first.id);
      return bundle;
    },

    /** Audit events of the job and of each of its runs (and its photos), oldest first, in words. */
    async trail(jobId: string, runIds: string[]): Promise<AuditEntry[]> {
      const lists = await Promise.all([jobId, ...runIds].map((id) => audit.list({ entityId: id, limit: 1000 })));
      return audit.inWords(lists.flat().sort((a, b) => a.id - b.id));
    },

    /** Jobs awaiting review, oldest submission first (the lead's inbox). */
    async inbox(): Promise<Inbox> {
      const rows = await repo.inbox();
      const items = rows.map((r) => ({ ...r, submittedAt: r.submittedAt.toISOString() }));
      return { items, count: items.length };
    },

    /**
     * Signs a submitted job: approve (locks the record, records the calibration date on the
     * instrument) or return with comments. The signer must be a lead who did not perform the work and
     * must re-enter their password (21 CFR Part 11 §11.200); a wrong password is refused and audited.
     */
    async review(
      user: SessionUser,
      jobId: string,
      body: { decision: 'approve' | 'return'; password: string; meaning: string; comment: string },
    ): Promise<{ job: JobDetail; signature: Signature }> {
      const job = await jobs.detail(jobId);
      const runs = await repo.runsWithPoints(jobId);
      const no = cannotSign(user, job, performerIds(job, runs));
      if (no) {
        if (no.status === 403) {
          await audit.record(user, 'signature.refused', 'job', jobId, undefined, { decision: body.decision, reason: no.reason });
          throw forbidden(no.reason);
        }
        throw no.status === 423 ? locked(no.reason) : conflict(no.reason);
      }
      if (!(await auth.checkPassword(user.id, body.password))) {
        await audit.record(user, 'signature.failed', 'job', jobId, undefined, {
          decision: body.decision,
          meaning: body.meaning,
          reason: 'password not accepted',
        });
        throw new AppError(401, 'unauthenticated', 'The password is not right; nothing was signed', { password: ['The password is not right'] });
      }
      const { hash } = await frozen(user, job);
      const signedAt = new Date();
      const approve = body.decision === 'approve';
      const zone = await clock.zone();
      const calibratedOn = approve ? calibrationDate(runs, dateInZone(signedAt, zone), zone) : null;
      const done = await repo.sign(
        {
          jobId,
          revision: job.revision,
          decision: body.decision,
          meaning: body.meaning,
          comment: body.comment,
          signerId: user.id,
          signerName: user.name,
          signerEmail: user.email,
          signedAt,
          recordHash: hash,
        },
        { status: approve ? 'approved' : 'returned', expectStatus: 'submitted', instrumentId: job.instrumentId, calibratedOn },
      );
      if (!done) throw conflict('The job changed while you were signing; reload and review it again');
      const signature = toSignature(done.signature);
      await audit.record(user, 'signature.applied', 'job', jobId, undefined, signature);
      await audit.record(
        user,
        approve ? 'job.approved' : 'job.returned',
        'job',
        jobId,
        { status: job.status, revision: job.revision },
        { status: approve ? 'approved' : 'returned', revision: job.revision, comment: body.comment || undefined },
      );
      if (approve && calibratedOn) {
        await audit.record(user, 'instrument.calibration-recorded', 'instrument', job.instrumentId, { lastCalibratedOn: done.previousCalibratedOn }, { lastCalibratedOn: calibratedOn, jobId });
      }
      tell({ kind: approve ? 'approved' : 'returned', jobId, signature });
      return { job: await jobs.detail(jobId), signature };
    },

    /**
     * Opens a correction of an approved record: the approved revision (detail, runs with points,
     * signatures) is kept as a snapshot, and the job returns to in-progress at revision + 1.
     */
    async openRevision(user: SessionUser, jobId: string, reason: string): Promise<JobDetail> {
      const job = await jobs.detail(jobId);
      if (job.status !== 'approved') throw conflict(`The job is ${job.status}; only an approved record is corrected by a revision`);
      const [runs, sigs] = await Promise.all([repo.runsWithPoints(jobId), repo.signatures(jobId)]);
      const kept = await freezer.stored(jobId, job.revision);
      const snapshot = {
        job,
        runs: runs.map(toSnapshotRun),
        signatures: sigs.filter((s) => s.revision === job.revision).map(toSignature),
        ...(kept ? { record: kept.record } : {}),
      };
      const row = await repo.openRevision({ jobId, revision: job.revision, reason, snapshot, createdBy: user.id, createdByName: user.name });
      if (!row) throw conflict('The job changed meanwhile; reload it');
      await audit.record(
        user,
        'job.revision-opened',
        'job',
        jobId,
        { revision: job.revision, status: job.status },
        { revision: job.revision + 1, status: 'in-progress', reason },
      );
      tell({ kind: 'revision-opened', jobId, revision: job.revision + 1, reason, byName: user.name });
      return jobs.detail(jobId);
    },

    async revisions(jobId: string): Promise<RevisionSummary[]> {
      await jobs.get(jobId);
      return (await repo.revisions(jobId)).map(summary);
    },

    async revision(jobId: string, revision: number): Promise<Revision> {
      const row = await repo.revision(jobId, revision);
      if (!row) throw notFound(`Revision ${revision} of this job is not kept (only superseded revisions are)`);
      return { ...summary(row), snapshot: row.snapshot as Revision['snapshot'] };
    },

    /**
     * The frozen record of a revision (default the current one), its hash recomputed now, and
     * each signature of that revision with whether its record hash still matches.
     */
    async record(jobId: string, revision?: number): Promise<RecordCheck> {
      const job = await jobs.get(jobId);
      const rev = revision ?? job.revision;
      const kept = await freezer.stored(jobId, rev);
      const sigs = (await repo.signatures(jobId)).filter((s) => s.revision === rev).map(toSignature);
      const hash = kept ? frozenRecordHash(kept.record) : null;
      return {
        jobId,
        revision: rev,
        record: kept?.record ?? null,
        frozenAt: kept?.frozenAt.toISOString() ?? null,
        hash,
        storedHashMatches: kept ? kept.hash === hash : null,
        signatures: sigs.map((s) => ({ ...s, valid: hash !== null && s.recordHash === hash })),
      };
    },

    async signatures(jobId: string): Promise<Signature[]> {
      await jobs.get(jobId);
      return (await repo.signatures(jobId)).map(toSignature);
    },

  };
  return service;
}

export type ReviewService = ReturnType<typeof createReviewService>;

/** `GET /api/jobs/:id/record`: the frozen record of a revision and whether its signatures still match it. */
export interface RecordCheck {
  jobId: string;
  revision: number;
  record: FrozenRecord | null;
  frozenAt: string | null;
  /** sha256 of the stored record, recomputed now; null when the revision has no frozen record. */
  hash: string | null;
  /** Whether the hash stored beside the record equals the recomputed one. */
  storedHashMatches: boolean | null;
  signatures: Array<Signature & { valid: boolean }>;
}
