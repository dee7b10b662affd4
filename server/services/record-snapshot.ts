/**
 * The frozen record: what a record and its certificate say, taken at submission from the register,
 * the site's settings, the runs and the audit trail (shared/schemas/records `FrozenRecordSchema`).
 * Submission stores it (job.service), a signature hashes it (review.service), the certificate of a
 * signed revision is built only from it (certificate.service).
 */
import { createHash } from 'node:crypto';
import type { Db } from '../db/client';
import { reviewRepository, type RunWithPoints } from '../db/repositories/review.repository';
import { hartRepository } from '../db/repositories/hart.repository';
import { toSnapshotRun } from './review-rows';
import type { JobDetail } from '../../shared/schemas/jobs';
import { FrozenRecordSchema, type FrozenRecord, type FrozenRun, type PointEvent } from '../../shared/schemas/records';
import { canonical, type AuditService } from './audit.service';

/** sha256 over the canonical JSON of a frozen record: the record hash a signature carries. */
export function frozenRecordHash(record: FrozenRecord): string {
  return createHash('sha256').update(canonical(record)).digest('hex');
}

/** The record as JSON would store it (no undefined, no -0, no Date): what is hashed is what is kept. */
function plain<T>(v: T): T {
  return JSON.parse(JSON.stringify(v)) as T;
}

function siteSettings(raw: string | undefined): Record<string, unknown> {
  try {
    const v: unknown = JSON.parse(raw ?? '{}');
    return v && typeof v === 'object' && !Array.isArray(v) ? (v as Record<string, unknown>) : {};
  } catch {
    return {};
  }
}

/** Reads a stored snapshot back; undefined when it does not have the frozen record's shape. */
export function parseFrozenRecord(raw: unknown): FrozenRecord | undefined {
  const r = FrozenRecordSchema.safeParse(raw);
  return r.success ? r.data : undefined;
}

export function createRecordFreezer(db: Db, audit: AuditService) {
  const repo = reviewRepository(db);

  /** Manual captures and redos of a run's points, from its audit events, oldest first. */
  async function pointEvents(runId: string): Promise<PointEvent[]> {
    const rows = await audit.list({ entityId: runId, limit: 1000 });
    const mine = rows.filter((r) => r.entity === 'run' && (r.action === 'run.point-redone' || r.action === 'run.point-captured-manually')).sort((a, b) => a.id - b.id);
    const names = await repo.userNames([...new Set(mine.map((r) => r.actorId).filter((x): x is string => !!x))]);
    return mine.map((r) => {
      const after = (r.after ?? {}) as { index?: number; reason?: string | null };
      const before = (r.before ?? null) as { index?: number; flags?: unknown; capture?: unknown } | null;
      const index = Number(after.index ?? before?.index ?? -1);
      return {
        kind: r.action === 'run.point-redone' ? ('redone' as const) : ('captured-manually' as const),
        index,
        at: r.at.toISOString(),
        byId: r.actorId,
        byName: (r.actorId && names.get(r.actorId)) || r.actorEmail,
        reason: typeof after.reason === 'string' && after.reason ? after.reason : null,
        before:
          r.action === 'run.point-redone' && before
            ? { flags: Array.isArray(before.flags) ? before.flags.map(String) : [], capture: before.capture ?? null }
            : null,
      };
    });
  }

  async function frozenRun(r: RunWithPoints): Promise<FrozenRun> {
    const plan = r.plan as { trim?: string | null } | null;
    return {
      ...toSnapshotRun(r),
      trim: plan?.trim ?? null,
      events: await pointEvents(r.id),
    };
  }

  return {
    /**
     * Builds the frozen record of a job from what stands now (the register, the standards, the
     * site's settings, the runs and their audit events). `by` is who froze it.
     */
    async build(job: JobDetail, by: { id: string; name: string }, at: Date): Promise<FrozenRecord> {
      const [instrument, standards, site, runs, hart] = await Promise.all([
        repo.instrumentRow(job.instrumentId),
        repo.standardRows(job.checklist.standardIds),
        repo.site(),
        repo.runsWithPoints(job.id),
        hartRepository(db).get(job.id),
      ]);
      if (!instrument) throw new Error(`job ${job.id}: instrument ${job.instrumentId} is missing`);
      const byId = new Map(standards.map((s) => [s.id, s]));
      const performerIds = new Set<string>();
      if (job.assigneeId) performerIds.add(job.assigneeId);
      for (const r of runs) if (r.startedBy) performerIds.add(r.startedBy);
      const names = await repo.userNames([...performerIds]);
      const record: FrozenRecord = {
        version: 1,
        frozenAt: at.toISOString(),
        frozenBy: by,
        job: {
          id: job.id,
          revision: job.revision,
          dueOn: job.dueOn,
          permitNo: job.permitNo,
          notes: job.notes,
          assigneeId: job.assigneeId,
          assigneeName: job.assigneeName,
          createdAt: job.createdAt,
          checklist: job.checklist,
        },
        instrument: {
          id: instrument.id,
          tag: instrument.tag,
          kind: instrument.kind,
          service: instrument.service,
          location: instrument.location,
          lrv: instrument.lrv,
          urv: instrument.urv,
          unit: instrument.unit,
          outputMode: instrument.outputMode,
          cutoffMode: instrument.cutoffMode,
          cutoffValue: instrument.cutoffValue,
          tolerancePct: instrument.tolerancePct,
          intervalDays: instrument.intervalDays,
          primaryElement: instrument.primaryElement ?? null,
          hazardousMedium: instrument.hazardousMedium,
        },
        // In the order the technician chose them.
        standards: job.checklist.standardIds
          .map((id) => byId.get(id))
          .filter((s) => s !== undefined)
          .map((s) => ({
            id: s.id,
            kind: s.kind,
            description: s.description,
            serial: s.serial,
            rangeMin: s.rangeMin,
            rangeMax: s.rangeMax,
            unit: s.unit,
            accuracy: s.accuracy,
            resolution: s.resolution,
            certificateNo: s.certificateNo,
            calibratedOn: s.calibratedOn,
            dueOn: s.dueOn,
            certificateFileId: s.certificateFileId,
            calibratingLab: s.calibratingLab,
          })),
        site: { name: site?.name ?? 'Stillpoint', domain: site?.domain ?? '', settings: siteSettings(site?.settings) },
        runs: await Promise.all(runs.map(frozenRun)),
        performers: [...performerIds].map((id) => ({ id, name: names.get(id) ?? id })),
        // The HART device, when the job read one: kept in the record, so the record hash covers every write.
        ...(hart.asFound || hart.writes.length || hart.trims.length
          ? { hart: { asFound: hart.asFound, asLeft: hart.asLeft, mismatches: hart.mismatches, resolution: hart.resolution, writes: hart.writes, trims: hart.trims } }
          : {}),
      };
      return plain(record);
    },

    /** The stored frozen record of a revision, or undefined (not submitted since records were frozen). */
    async stored(jobId: string, revision: number): Promise<{ record: FrozenRecord; hash: string; frozenAt: Date } | undefined> {
      const row = await repo.snapshot(jobId, revision);
      const record = row ? parseFrozenRecord(row.snapshot) : undefined;
      return row && record ? { record, hash: row.hash, frozenAt: row.frozenAt } : undefined;
    },
  };
}
export type RecordFreezer = ReturnType<typeof createRecordFreezer>;
