import { zodResolver } from '@hookform/resolvers/zod';
import { useId, type ReactNode } from 'react';
import { useForm } from 'react-hook-form';
import type { z } from 'zod';
import { ReasonBodySchema } from '../../../shared/schemas/reason';
import { Button } from './button';
import { Dialog } from './dialog';

export interface ReasonDialogProps {
  open: boolean;
  title: string;
  description: ReactNode;
  /** The submit button's words: what happens when the reason is given. */
  submitLabel: string;
  placeholder?: string;
  onClose: () => void;
  /** Called with the trimmed reason; a rejection's message is shown under the field and the dialog stays open. */
  onSubmit: (reason: string) => Promise<unknown>;
  pending: boolean;
  submitTestId?: string;
}

/**
 * A dialog that asks why: one reason field (focused when it opens, WAI-ARIA APG modal dialog
 * pattern), its error tied to it by aria-describedby, Cancel and the action. The server checks the
 * same rule again; its refusal is shown in the same place.
 */
export function ReasonDialog({ open, title, description, submitLabel, placeholder, onClose, onSubmit, pending, submitTestId }: ReasonDialogProps) {
  const form = useForm<z.input<typeof ReasonBodySchema>>({ resolver: zodResolver(ReasonBodySchema), defaultValues: { reason: '' } });
  const id = useId();
  const error = form.formState.errors.reason?.message;
  const close = () => {
    form.reset();
    onClose();
  };
  return (
    <Dialog open={open} onClose={close} title={title} description={description}>
      <form
        className="flex flex-col gap-3"
        onSubmit={form.handleSubmit(async (v) => {
          try {
            await onSubmit(v.reason.trim());
            form.reset();
          } catch (e) {
            form.setError('reason', { message: e instanceof Error ? e.message : 'Refused' });
          }
        })}
      >
        <label htmlFor={id} className="text-sm font-medium text-ink">
          Reason
        </label>
        <textarea
          id={id}
          rows={3}
          // The reason is what this dialog asks for: focus goes to it when the dialog opens.
          // eslint-disable-next-line jsx-a11y/no-autofocus
          autoFocus
          aria-invalid={error ? true : undefined}
          aria-describedby={error ? `${id}-error` : undefined}
          className="rounded-md border border-line-strong bg-surface px-3 py-2 text-ink focus-visible:outline-2 focus-visible:outline-focus"
          placeholder={placeholder}
          {...form.register('reason')}
        />
        {error && (
          <p id={`${id}-error`} role="alert" className="text-sm text-danger">
            {error}
          </p>
        )}
        <div className="flex justify-end gap-2 pt-2">
          <Button variant="secondary" onClick={close}>
            Cancel
          </Button>
          <Button type="submit" loading={pending || form.formState.isSubmitting} data-testid={submitTestId}>
            {submitLabel}
          </Button>
        </div>
      </form>
    </Dialog>
  );
}
