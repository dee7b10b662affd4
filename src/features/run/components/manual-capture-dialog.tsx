import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import type { z } from 'zod';
import { ManualCaptureBodySchema } from '../../../../shared/schemas/runs';
import { Button } from '../../../components/ui/button';
import { Dialog } from '../../../components/ui/dialog';

type Values = z.input<typeof ManualCaptureBodySchema>;

/** Manual capture needs a reason, kept with the point. */
export function ManualCaptureDialog({ open, pointLabel, onClose, onCapture, pending }: { open: boolean; pointLabel: string; onClose: () => void; onCapture: (reason: string) => Promise<unknown>; pending: boolean }) {
  const form = useForm<Values>({ resolver: zodResolver(ManualCaptureBodySchema), defaultValues: { reason: '' } });
  const error = form.formState.errors.reason?.message;
  return (
    <Dialog
      open={open}
      onClose={() => {
        form.reset();
        onClose();
      }}
      title={`Capture ${pointLabel} manually`}
      description="The point is captured now from the readings so far, flagged as manual, with your reason."
    >
      <form
        className="flex flex-col gap-3"
        onSubmit={form.handleSubmit(async (v) => {
          try {
            await onCapture(v.reason.trim());
            form.reset();
          } catch (e) {
            form.setError('reason', { message: e instanceof Error ? e.message : 'Capture refused' });
          }
        })}
      >
        <label htmlFor="manual-reason" className="text-sm font-medium text-ink">
          Reason
        </label>
        <textarea
          id="manual-reason"
          rows={3}
          // The reason is what this dialog asks for: focus goes to it when the dialog opens (WAI-ARIA APG, modal dialog pattern).
          // eslint-disable-next-line jsx-a11y/no-autofocus
          autoFocus
          aria-invalid={error ? true : undefined}
          aria-describedby={error ? 'manual-reason-error' : undefined}
          className="rounded-md border border-line-strong bg-surface px-3 py-2 text-ink focus-visible:outline-2 focus-visible:outline-focus"
          placeholder="e.g. pump noise keeps the reading from settling; reading steady by eye for 60 s"
          {...form.register('reason')}
        />
        {error && (
          <p id="manual-reason-error" role="alert" className="text-sm text-danger">
            {error}
          </p>
        )}
        <div className="flex justify-end gap-2 pt-2">
          <Button variant="secondary" onClick={onClose}>
            Cancel
          </Button>
          <Button type="submit" loading={pending}>
            Capture now
          </Button>
        </div>
      </form>
    </Dialog>
  );
}
