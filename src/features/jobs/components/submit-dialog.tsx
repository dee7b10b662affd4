import type { JobDetail } from '../../../../shared/schemas/jobs';
import { Button } from '../../../components/ui/button';
import { Dialog } from '../../../components/ui/dialog';
import { latestRun } from '../lib/job-steps';
import { DECISION_LABEL } from './run-launcher';

const KIND_LABEL: Record<string, string> = { 'mode-check': 'Output-mode check', 'as-found': 'As-found', trim: 'Trim', 'as-left': 'As-left' };

/** What a submission hands to the lead, in words: one line per item. */
export function submissionSummary(job: JobDetail): Array<{ label: string; value: string; testId: string }> {
  const complete = job.runs.filter((r) => r.status === 'complete');
  const runLine = (kind: 'mode-check' | 'as-found' | 'as-left') => {
    const r = latestRun(job.runs, kind, true);
    if (!r) return 'none';
    const d = r.overallDecision ? (DECISION_LABEL[r.overallDecision]?.label ?? r.overallDecision) : 'complete';
    const count = complete.filter((x) => x.kind === kind).length;
    return count > 1 ? `${d} (latest of ${count} runs)` : d;
  };
  const trims = complete.filter((r) => r.kind === 'trim').length;
  const rts = job.checklist.returnedToService;
  return [
    { label: 'Instrument', value: `${job.tag}, revision ${job.revision}`, testId: 'submit-tag' },
    { label: KIND_LABEL['mode-check']!, value: runLine('mode-check'), testId: 'submit-mode-check' },
    { label: KIND_LABEL['as-found']!, value: runLine('as-found'), testId: 'submit-as-found' },
    { label: 'Trims', value: trims === 0 ? 'none' : `${trims} recorded`, testId: 'submit-trims' },
    { label: KIND_LABEL['as-left']!, value: runLine('as-left'), testId: 'submit-as-left' },
    { label: 'Standards', value: job.standards.length ? job.standards.map((s) => `${s.description} (${s.serial})`).join('; ') : 'none', testId: 'submit-standards' },
    { label: 'Permit to work', value: job.permitNo ?? 'not recorded', testId: 'submit-permit' },
    { label: 'Returned to service', value: rts ? `by ${rts.byName}` : 'not yet', testId: 'submit-returned' },
  ];
}

export interface SubmitDialogProps {
  open: boolean;
  job: JobDetail;
  pending: boolean;
  onClose: () => void;
  onConfirm: () => void;
}

/** Confirmation before submitting: lists what goes to the lead and says the record is frozen at submission. */
export function SubmitDialog({ open, job, pending, onClose, onConfirm }: SubmitDialogProps) {
  return (
    <Dialog
      open={open}
      onClose={onClose}
      title={`Submit ${job.tag} for review?`}
      description="Submission freezes what the record and its certificate say; a lead then signs it off or returns it to you."
      footer={
        <>
          <Button variant="secondary" onClick={onClose}>
            Not yet
          </Button>
          <Button loading={pending} onClick={onConfirm} data-testid="confirm-submit">
            Submit for review
          </Button>
        </>
      }
    >
      <dl className="grid grid-cols-[auto_minmax(0,1fr)] gap-x-4 gap-y-1.5 text-sm" data-testid="submit-summary">
        {submissionSummary(job).map((row) => (
          <div key={row.testId} className="contents">
            <dt className="text-ink-muted">{row.label}</dt>
            <dd className="min-w-0 break-words text-ink" data-testid={row.testId}>
              {row.value}
            </dd>
          </div>
        ))}
      </dl>
    </Dialog>
  );
}
