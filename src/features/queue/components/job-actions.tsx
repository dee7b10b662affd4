import { Link } from 'react-router';
import type { Job } from '../../../../shared/schemas/jobs';
import { toast } from '../../../components/ui/toast';
import { isApiError } from '../../../lib/api-client';
import { useAssignJob } from '../api/get-queue';

/** A lead's controls on a queued job: assign or reassign, and open the review once submitted. */
export function LeadJobActions({ job, technicians }: { job: Job; technicians: Array<{ id: string; name: string }> }) {
  const assign = useAssignJob();
  return (
    <>
      {job.status === 'submitted' && (
        <Link to={`/jobs/${job.id}/review`} className="text-sm font-medium text-accent hover:underline" data-testid={`review-link-${job.tag}`}>
          Review
        </Link>
      )}
      {job.status !== 'submitted' && (
        <select
          aria-label={`Assign ${job.tag}`}
          className="h-8 rounded-md border border-line-strong bg-surface px-2 text-sm"
          value={job.assigneeId ?? ''}
          disabled={assign.isPending}
          onChange={(e) =>
            e.target.value &&
            assign.mutate(
              { jobId: job.id, assigneeId: e.target.value },
              {
                onSuccess: (j) => toast(`${j.tag} assigned to ${j.assigneeName ?? 'the technician'}`, { tone: 'success' }),
                onError: (err) => toast('Not assigned', { description: isApiError(err) ? err.message : String(err), tone: 'error' }),
              },
            )
          }
        >
          <option value="">Unassigned</option>
          {technicians.map((t) => (
            <option key={t.id} value={t.id}>
              {t.name}
            </option>
          ))}
        </select>
      )}
    </>
  );
}
