/** Review rows as the API and the frozen record show them. */
import type { RunWithPoints, SignatureRow } from '../db/repositories/review.repository';
import type { RevisionSummary, Signature, SnapshotRun } from '../../shared/schemas/records';

export function toSignature(r: SignatureRow): Signature {
  return {
    id: r.id,
    jobId: r.jobId,
    revision: r.revision,
    decision: r.decision,
    meaning: r.meaning,
    comment: r.comment,
    signerId: r.signerId,
    signerName: r.signerName,
    signerEmail: r.signerEmail,
    signedAt: r.signedAt.toISOString(),
    recordHash: r.recordHash,
  };
}

export function toSnapshotRun(r: RunWithPoints): SnapshotRun {
  return {
    id: r.id,
    kind: r.kind,
    status: r.status,
    plan: r.plan,
    results: r.results ?? null,
    startedBy: r.startedBy,
    startedAt: r.startedAt.toISOString(),
    endedAt: r.endedAt?.toISOString() ?? null,
    points: r.points.map((p) => ({ index: p.index, state: p.state, flags: p.flags, capture: p.capture ?? null, reason: p.reason })),
  };
}

/** A revision as the list of revisions shows it. */
export function summary(r: { revision: number; reason: string; createdAt: Date; createdByName: string }): RevisionSummary {
  return { revision: r.revision, reason: r.reason, createdAt: r.createdAt.toISOString(), createdByName: r.createdByName };
}
