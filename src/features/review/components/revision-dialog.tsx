import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { RevisionBodySchema, type RevisionBody } from '../../../../shared/schemas/records';
import { Button } from '../../../components/ui/button';
import { Dialog } from '../../../components/ui/dialog';
import { TextField } from '../../../components/ui/field';
import { isApiError } from '../../../lib/api-client';
import { useOpenRevision } from '../api/sign-job';

/** Opens a correction of an approved record: the approved revision is kept, the job reopens at the next revision. */
export function RevisionDialog({ jobId, revision, open, onClose, onOpened }: { jobId: string; revision: number; open: boolean; onClose: () => void; onOpened: () => void }) {
  const mutate = useOpenRevision(jobId);
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors, isSubmitting },
  } = useForm<RevisionBody, unknown, RevisionBody>({ resolver: zodResolver(RevisionBodySchema), defaultValues: { reason: '' } });
  const onSubmit = handleSubmit(async (v) => {
    try {
      await mutate.mutateAsync(v);
      onOpened();
    } catch (e) {
      setError(isApiError(e) && e.fieldMessage('reason') ? 'reason' : 'root', { message: isApiError(e) ? (e.fieldMessage('reason') ?? e.message) : 'Something went wrong' });
    }
  });
  return (
    <Dialog open={open} onClose={onClose} title={`Correct revision ${revision}`} description={`Revision ${revision} stays readable as it was approved; the job reopens as revision ${revision + 1}.`}>
      <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4">
        {errors.root?.message && (
          <p role="alert" className="text-sm text-danger">
            {errors.root.message}
          </p>
        )}
        <TextField label="Reason for the correction" error={errors.reason?.message} {...register('reason')} />
        <div className="flex justify-end gap-2">
          <Button variant="secondary" onClick={onClose}>
            Cancel
          </Button>
          <Button type="submit" loading={isSubmitting}>
            Open revision {revision + 1}
          </Button>
        </div>
      </form>
    </Dialog>
  );
}
