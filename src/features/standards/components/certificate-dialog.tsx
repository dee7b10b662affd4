import type { Standard } from '../../../../shared/schemas/standards';
import { AttachmentList, CERTIFICATE } from '../../../components/ui/attachments';
import { Dialog } from '../../../components/ui/dialog';
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

/** A standard's calibration certificates: open them; a lead or an admin uploads and removes (with a reason). */
export function CertificateDialog({ standard, canEdit, onClose }: { standard: Standard | null; canEdit: boolean; onClose: () => void }) {
  return (
    <Dialog
      open={!!standard}
      onClose={onClose}
      title={`Certificates of ${standard?.serial ?? ''}`}
      description={standard ? `${standard.description} · certificate ${standard.certificateNo}. The newest upload is the standard's certificate; records that used an earlier one keep it.` : undefined}
      className="w-[min(40rem,calc(100vw-2rem))]"
    >
      {standard && (
        <AttachmentList
          target={{ entity: 'standard', id: standard.id }}
          spec={CERTIFICATE}
          canUpload={canEdit}
          canRemove={canEdit}
          emptyText="No certificate uploaded."
          testId="standard-certificates"
        />
      )}
    </Dialog>
  );
}
