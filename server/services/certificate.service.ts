import type { Db } from '../db/client';
import { reviewRepository } from '../db/repositories/review.repository';
import { CertificateDataError, type CertificateData } from '../certificates/certificate-data';
import { renderCertificate } from '../certificates/certificate-pdf';
import { certificateFromRecord } from '../certificates/certificate-record';
import { conflict } from '../errors';
import type { AuditService } from './audit.service';
import type { JobService } from './job.service';
import { createSiteClock } from './site-clock';
import { createRecordFreezer } from './record-snapshot';

/**
 * Builds the certificate of a job and renders the PDF. A submitted or signed revision is built
 * only from its frozen record (record_snapshots) and the signatures of that revision, so its bytes
 * never change; work not yet submitted gets a draft from what stands now.
 */
export function createCertificateService(db: Db, deps: { jobs: JobService; audit: AuditService }) {
  const repo = reviewRepository(db);
  const freezer = createRecordFreezer(db, deps.audit);
  const clock = createSiteClock(db);

  const service = {
    async data(jobId: string, today?: string): Promise<CertificateData> {
      today ??= await clock.today();
      const job = await deps.jobs.detail(jobId);
      const [sigs, revs, kept] = await Promise.all([repo.signatures(jobId), repo.revisions(jobId), freezer.stored(jobId, job.revision)]);
      // A record signed before submissions were frozen has no snapshot: it is drawn from what stands.
      const record = kept?.record ?? (await freezer.build(job, { id: '', name: 'draft' }, new Date()));
      return certificateFromRecord(record, {
        signatures: sigs.filter((s) => s.revision === job.revision).map((s) => ({ decision: s.decision, signerName: s.signerName, meaning: s.meaning, signedAt: s.signedAt.toISOString() })),
        approved: job.status === 'approved',
        revisionReason: revs.find((r) => r.revision === job.revision - 1)?.reason,
        draftDate: today,
      });
    },

    /** The certificate PDF; 409 when the record cannot make one yet (no as-found results, no standards). */
    async pdf(jobId: string): Promise<{ pdf: Buffer; fileName: string; draft: boolean }> {
      const data = await service.data(jobId);
      try {
        const pdf = await renderCertificate(data);
        return { pdf, fileName: `${data.certificateNumber}-r${data.revision}${data.draft ? '-draft' : ''}.pdf`, draft: !!data.draft };
      } catch (e) {
        if (e instanceof CertificateDataError) throw conflict(`No certificate yet: ${e.problems.join('; ')}`);
        throw e;
      }
    },
  };
  return service;
}
export type CertificateService = ReturnType<typeof createCertificateService>;
