import type { Standard } from '../../../../shared/schemas/standards';
import { fileUrl } from '../../../lib/attachments';

/** The certificate number, with a link to the current certificate file when one is uploaded. */
export function CertificateCell({ standard }: { standard: Standard }) {
  return (
    <span className="flex flex-wrap items-center gap-x-2 whitespace-nowrap">
      <span className="num">{standard.certificateNo}</span>
      {standard.certificateFileId ? (
        <a className="text-xs text-accent hover:underline" href={fileUrl(standard.certificateFileId)} target="_blank" rel="noreferrer" data-testid="register-certificate-link">
          PDF
        </a>
      ) : (
        <span className="text-xs text-ink-muted">no file</span>
      )}
    </span>
  );
}
