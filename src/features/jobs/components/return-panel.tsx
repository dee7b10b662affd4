import type { ChecklistPatch, JobDetail } from '../../../../shared/schemas/jobs';
import { SafetyNote } from '../../../components/ui/safety-note';
import { toast } from '../../../components/ui/toast';
import { isApiError } from '../../../lib/api-client';
import { SignedStep } from './signed-step';

/** Return to service: bypass removal (when one was applied) and the loop back in service. */
export function ReturnPanel({ job, canEdit, save, saving }: { job: JobDetail; canEdit: boolean; save: (p: ChecklistPatch) => Promise<unknown>; saving: boolean }) {
  const c = job.checklist;
  const locked = !canEdit || job.status === 'submitted' || job.status === 'approved';
  const act = (patch: ChecklistPatch) =>
    void save(patch).catch((e: unknown) => toast('Not saved', { tone: 'error', description: isApiError(e) || e instanceof Error ? e.message : undefined }));
  return (
    <div className="flex flex-col gap-3">
      <SafetyNote stage="return" />
      <div className="divide-y divide-line">
        {c.bypass.recorded && (
          <SignedStep
            testId="ack-bypass-removed"
            label={`Interlock bypass removed: ${c.bypass.description}`}
            detail="The trip is active again before the loop goes back to the operators."
            value={c.bypass.removed}
            disabled={locked || saving}
            onConfirm={() => act({ bypassRemoved: true })}
          />
        )}
        <SignedStep
          testId="ack-returned"
          label="Loop returned to service"
          detail="Calibrator disconnected, manifold restored (equalising valve closed last), operators told the reading is live."
          value={c.returnedToService}
          disabled={locked || saving || (!!c.bypass.recorded && !c.bypass.removed)}
          onConfirm={() => act({ returnedToService: true })}
        />
      </div>
    </div>
  );
}
