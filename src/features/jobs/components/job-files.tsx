import type { JobDetail } from '../../../../shared/schemas/jobs';
import { AttachmentList, PHOTO } from '../../../components/ui/attachments';
import { fileUrl } from '../../../lib/attachments';

/** As-found photos of the job (the assigned technician adds and removes them until submission). */
export function JobPhotos({ job, canEdit }: { job: JobDetail; canEdit: boolean }) {
  const locked = job.status === 'approved' ? 'The record is approved and locked; its photos stay as they are.' : job.status === 'submitted' ? 'Submitted for review: the photos stay as they are unless the job is returned.' : undefined;
  return (
    <AttachmentList
      target={{ entity: 'job', id: job.id }}
      spec={PHOTO}
      canUpload={canEdit}
      canRemove={canEdit}
      lockedReason={locked}
      emptyText="No as-found photos."
      testId="job-photos"
    />
  );
}

/** The certificates of the standards chosen for the job, to open. */
export function StandardCertificates({ job }: { job: JobDetail }) {
  if (!job.standards.length) return <p className="text-sm text-ink-muted">No standards chosen yet.</p>;
  return (
    <ul className="flex flex-col gap-1 text-sm" data-testid="job-certificates">
      {job.standards.map((s) => (
        <li key={s.id}>
          {s.description} <span className="num text-ink-muted">({s.serial})</span> · cert. <span className="num">{s.certificateNo}</span> ·{' '}
          {s.certificateFileId ? (
            <a className="text-accent hover:underline" href={fileUrl(s.certificateFileId)} target="_blank" rel="noreferrer" data-testid="certificate-link">
              Open the certificate
            </a>
          ) : (
            <span className="text-ink-muted">no certificate file</span>
          )}
        </li>
      ))}
    </ul>
  );
}
