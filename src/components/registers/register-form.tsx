import type { FormEventHandler, ReactNode } from 'react';
import { Button } from '../ui/button';
import { FormError } from '../ui/field';

export interface RegisterFormProps {
  /** The form's accessible name ("Edit FT-101", "New standard"). */
  label: string;
  onSubmit: FormEventHandler<HTMLFormElement>;
  onCancel: () => void;
  /** An error of the whole form (not of one field), shown above the fields. */
  rootError?: string | undefined;
  submitting: boolean;
  submitLabel: string;
  children: ReactNode;
}

/** The frame of a register entry's form: two columns of fields, a form-level error, Cancel and Save. */
export function RegisterForm({ label, onSubmit, onCancel, rootError, submitting, submitLabel, children }: RegisterFormProps) {
  return (
    <form onSubmit={onSubmit} noValidate className="grid grid-cols-1 gap-4 sm:grid-cols-2" aria-label={label}>
      <FormError message={rootError} className="sm:col-span-2" />
      {children}
      <div className="flex justify-end gap-2 sm:col-span-2">
        <Button variant="secondary" onClick={onCancel}>
          Cancel
        </Button>
        <Button type="submit" loading={submitting}>
          {submitLabel}
        </Button>
      </div>
    </form>
  );
}
