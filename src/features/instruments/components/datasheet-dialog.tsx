import type { Instrument } from '../../../../shared/schemas/instruments';
import { AttachmentList, DATASHEET } from '../../../components/ui/attachments';
import { Dialog } from '../../../components/ui/dialog';

/** An instrument's datasheets: open them; a lead or an admin uploads and removes (with a reason). */
export function DatasheetDialog({ instrument, canEdit, onClose }: { instrument: Instrument | null; canEdit: boolean; onClose: () => void }) {
  return (
    <Dialog
      open={!!instrument}
      onClose={onClose}
      title={`Datasheets of ${instrument?.tag ?? ''}`}
      description={instrument ? `${instrument.service} · ${instrument.location}` : undefined}
      className="w-[min(40rem,calc(100vw-2rem))]"
    >
      {instrument && (
        <AttachmentList
          target={{ entity: 'instrument', id: instrument.id }}
          spec={DATASHEET}
          canUpload={canEdit}
          canRemove={canEdit}
          emptyText="No datasheet uploaded."
          testId="instrument-datasheets"
        />
      )}
    </Dialog>
  );
}
