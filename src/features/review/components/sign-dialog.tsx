import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { ReviewBodySchema, SIGNATURE_MEANINGS, type ReviewBody, type ReviewDecision } from '../../../../shared/schemas/records';
import { Button } from '../../../components/ui/button';
import { Dialog } from '../../../components/ui/dialog';
import { SelectField, TextField, FormError } from '../../../components/ui/field';
import { isApiError } from '../../../lib/api-client';
import { useSignJob } from '../api/sign-job';

export interface SignDialogProps {
  jobId: string;
  tag: string;
  revision: number;
  decision: ReviewDecision | null;
  signerName: string;
  signerEmail: string;
  onClose: () => void;
  onSigned: () => void;
}

/**
 * The electronic signature: the signer's name and email shown, the password entered again, the
 * meaning chosen and, for a return, what needs correcting (21 CFR Part 11 §11.50, §11.200).
 */
export function SignDialog({ jobId, tag, revision, decision, signerName, signerEmail, onClose, onSigned }: SignDialogProps) {
  const sign = useSignJob(jobId);
  const form = useForm<ReviewBody, unknown, ReviewBody>({
    resolver: zodResolver(ReviewBodySchema) as never,
    values: { decision: decision ?? 'approve', password: '', meaning: SIGNATURE_MEANINGS[decision ?? 'approve'][0], comment: '' },
  });
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors, isSubmitting },
  } = form;
  const onSubmit = handleSubmit(async (values) => {
    try {
      await sign.mutateAsync(values);
      onSigned();
    } catch (e) {
      if (!isApiError(e)) return setError('root', { message: 'Something went wrong. Try again.' });
      let placed = false;
      for (const f of ['password', 'meaning', 'comment'] as const) {
        const m = e.fieldMessage(f);
        if (m) {
          setError(f, { message: m }, { shouldFocus: !placed });
          placed = true;
        }
      }
      if (!placed) setError('root', { message: e.message });
    }
  });
  const approving = decision === 'approve';
  return (
    <Dialog
      open={decision !== null}
      onClose={onClose}
      title={approving ? `Approve ${tag}, revision ${revision}` : `Return ${tag} for correction`}
      description={
        approving
          ? 'Approving locks this revision. Later corrections need a new revision with a reason.'
          : 'The technician sees your comment and can correct and resubmit.'
      }
    >
      <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4" aria-label="Electronic signature">
        <FormError message={errors.root?.message} />
        <div className="rounded-md border border-line bg-sunken/60 px-3 py-2 text-sm">
          Signing as <strong>{signerName}</strong> <span className="text-ink-muted">({signerEmail})</span>. The date and time are recorded in UTC.
        </div>
        <SelectField
          label="Meaning of this signature"
          options={SIGNATURE_MEANINGS[decision ?? 'approve'].map((m) => ({ value: m, label: m }))}
          error={errors.meaning?.message}
          {...register('meaning')}
        />
        <TextField
          label={approving ? 'Comment (optional)' : 'What needs correcting'}
          autoComplete="off"
          error={errors.comment?.message}
          {...register('comment')}
        />
        <TextField label="Your password" type="password" autoComplete="current-password" error={errors.password?.message} {...register('password')} />
        <div className="flex justify-end gap-2 pt-2">
          <Button variant="secondary" onClick={onClose}>
            Cancel
          </Button>
          <Button type="submit" variant={approving ? 'primary' : 'danger'} loading={isSubmitting}>
            {approving ? 'Sign and approve' : 'Sign and return'}
          </Button>
        </div>
      </form>
    </Dialog>
  );
}
