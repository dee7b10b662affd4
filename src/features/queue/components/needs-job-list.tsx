import { zodResolver } from '@hookform/resolvers/zod';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { CreateJobBodySchema, type CreateJobBody } from '../../../../shared/schemas/jobs';
import type { NeedsJob } from '../../../../shared/schemas/queue';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { Dialog } from '../../../components/ui/dialog';
import { SelectField, TextField } from '../../../components/ui/field';
import { applyServerErrors } from '../../../lib/form-errors';
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

const JOB_FIELDS = ['assigneeId', 'dueOn', 'notes'] as const;

function CreateJobDialog({ item, technicians, onClose }: { item: NeedsJob; technicians: Array<{ id: string; name: string }>; onClose: () => void }) {
  const create = useCreateJob();
  const today = siteToday();
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors, isSubmitting },
  } = useForm<CreateJobBody>({
    resolver: zodResolver(CreateJobBodySchema) as never,
    criteriaMode: 'all',
    defaultValues: { instrumentId: item.instrumentId, assigneeId: null, dueOn: item.nextDueOn && item.nextDueOn > today ? item.nextDueOn : today, notes: '' },
  });
  const onSubmit = handleSubmit(async (values) => {
    try {
      await create.mutateAsync(values);
      onClose();
    } catch (e) {
      applyServerErrors(e, setError, JOB_FIELDS);
    }
  });
  return (
    <Dialog open onClose={onClose} title={`New job for ${item.tag}`} description={item.service}>
      <form className="flex flex-col gap-4" onSubmit={onSubmit} noValidate aria-label={`New job for ${item.tag}`}>
        {errors.root?.message && (
          <p role="alert" className="text-sm text-danger">
            {errors.root.message}
          </p>
        )}
        <SelectField
          label="Technician"
          options={[{ value: '', label: 'Not assigned yet' }, ...technicians.map((t) => ({ value: t.id, label: t.name }))]}
          error={errors.assigneeId?.message}
          {...register('assigneeId', { setValueAs: (v: string | null) => v || null })}
        />
        <TextField label="Due on" type="date" error={errors.dueOn?.message} {...register('dueOn')} />
        <TextField label="Notes for the technician" hint="Optional: access, spares, anything the job needs." error={errors.notes?.message} {...register('notes')} />
        <div className="flex justify-end gap-2">
          <Button variant="secondary" onClick={onClose}>
            Cancel
          </Button>
          <Button type="submit" loading={isSubmitting || create.isPending}>
            Create job
          </Button>
        </div>
      </form>
    </Dialog>
  );
}
