import { useState } from 'react';
import type { NeedsJob } from '../../../../shared/schemas/records';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { Dialog } from '../../../components/ui/dialog';
import { SelectField, TextField } from '../../../components/ui/field';
import { isApiError } from '../../../lib/api-client';
import { relativeDays, siteToday } from '../../../lib/format';
import { useCreateJob } from '../api/get-queue';

/** Instruments falling due with no open job; a lead creates (and assigns) the job from here. */
export function NeedsJobList({ items, technicians, canPlan }: { items: NeedsJob[]; technicians: Array<{ id: string; name: string }>; canPlan: boolean }) {
  const [target, setTarget] = useState<NeedsJob | null>(null);
  if (!items.length) return <p className="rounded-card border border-dashed border-line px-4 py-6 text-center text-sm text-ink-muted">Every instrument falling due has a job.</p>;
  return (
    <>
      <ul aria-label="Needs a job" className="divide-y divide-line overflow-hidden rounded-card border border-line bg-surface shadow-card">
        {items.map((n) => (
          <li key={n.instrumentId} className="grid grid-cols-[minmax(7rem,10rem)_1fr_auto] items-center gap-4 px-4 py-3">
            <div className="num font-semibold">{n.tag}</div>
            <div className="flex flex-wrap items-center gap-x-4 gap-y-1 text-sm text-ink-muted">
              <span>{n.service}</span>
              {n.nextDueOn ? (
                <span>
                  Due <span className="num text-ink">{n.nextDueOn}</span> ({relativeDays(n.daysLeft ?? 0)})
                </span>
              ) : (
                <span>Never calibrated</span>
              )}
              {n.overdue ? <Badge tone="danger">Overdue</Badge> : <Badge tone="warn">Needs a job</Badge>}
            </div>
            {canPlan && (
              <Button size="sm" variant="secondary" onClick={() => setTarget(n)}>
                Create job
              </Button>
            )}
          </li>
        ))}
      </ul>
      {target && <CreateJobDialog item={target} technicians={technicians} onClose={() => setTarget(null)} />}
    </>
  );
}

function CreateJobDialog({ item, technicians, onClose }: { item: NeedsJob; technicians: Array<{ id: string; name: string }>; onClose: () => void }) {
  const create = useCreateJob();
  const today = siteToday();
  const [assigneeId, setAssigneeId] = useState('');
  const [dueOn, setDueOn] = useState(item.nextDueOn && item.nextDueOn > today ? item.nextDueOn : today);
  const [error, setError] = useState<string | null>(null);
  return (
    <Dialog open onClose={onClose} title={`New job for ${item.tag}`} description={item.service}>
      <form
        className="flex flex-col gap-4"
        onSubmit={(e) => {
          e.preventDefault();
          create.mutate(
            { instrumentId: item.instrumentId, assigneeId: assigneeId || null, dueOn },
            { onSuccess: onClose, onError: (err) => setError(isApiError(err) ? (err.fieldMessage('assigneeId') ?? err.fieldMessage('dueOn') ?? err.message) : String(err)) },
          );
        }}
      >
        {error && (
          <p role="alert" className="text-sm text-danger">
            {error}
          </p>
        )}
        <SelectField label="Technician" value={assigneeId} onChange={(e) => setAssigneeId(e.target.value)} options={[{ value: '', label: 'Not assigned yet' }, ...technicians.map((t) => ({ value: t.id, label: t.name }))]} />
        <TextField label="Due on" type="date" value={dueOn} onChange={(e) => setDueOn(e.target.value)} />
        <div className="flex justify-end gap-2">
          <Button variant="secondary" onClick={onClose}>
            Cancel
          </Button>
          <Button type="submit" loading={create.isPending}>
            Create job
          </Button>
        </div>
      </form>
    </Dialog>
  );
}
