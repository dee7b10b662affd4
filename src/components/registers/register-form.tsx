import { zodResolver } from '@hookform/resolvers/zod';
import type { BaseSyntheticEvent, ReactNode } from 'react';
import { useForm, type DefaultValues, type FieldValues, type Path } from 'react-hook-form';
import type { z } from 'zod';
import { applyServerErrors } from '../../lib/form-errors';
import type { RegisterApi } from '../../lib/register-api';
import { Button } from '../ui/button';
import { FormError } from '../ui/field';

/** What the register page gives the form of one entry: the row (null for a new one) and where to go next. */
export interface RegisterFormSlotProps<Row> {
  row: Row | null;
  onSaved: (row: Row) => void;
  onCancel: () => void;
}

export interface RegisterFormProps {
  /** The form's accessible name ("Edit FT-101", "New standard"). */
  label: string;
  /** react-hook-form's submit: it prevents the page's own submission and returns once saved or refused. */
  onSubmit: (e?: BaseSyntheticEvent) => Promise<void>;
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

/**
 * The state of a register entry's form: react-hook-form checked by the entry's schema, a submit
 * that saves through the register's API (an optional `guard` may stop it first, to ask something),
 * the server's field errors placed beside their fields, and the frame's props, named after the row.
 */
export function useRegisterForm<Row extends { id: string }, Input extends FieldValues>(
  registerApi: RegisterApi<Row, Input>,
  { row, onSaved, onCancel }: RegisterFormSlotProps<Row>,
  o: { schema: z.ZodType<Input>; defaultValues: DefaultValues<Input>; fields: readonly Path<Input>[]; guard?: (values: Input) => boolean },
) {
  const { spec } = registerApi;
  const save = registerApi.useSave(row?.id ?? null);
  const form = useForm<Input>({ resolver: zodResolver(o.schema as never) as never, defaultValues: o.defaultValues, criteriaMode: 'all' });
  const onSubmit = form.handleSubmit(async (values) => {
    if (o.guard && !o.guard(values)) return;
    try {
      onSaved(await save.mutateAsync(values));
    } catch (e) {
      applyServerErrors(e, form.setError, o.fields);
    }
  });
  const frame: Omit<RegisterFormProps, 'children'> = {
    label: row ? `Edit ${String(row[spec.keyField])}` : `New ${spec.noun}`,
    onSubmit,
    onCancel,
    rootError: form.formState.errors.root?.message,
    submitting: form.formState.isSubmitting,
    submitLabel: row ? 'Save changes' : `Add ${spec.noun}`,
  };
  return { form, onSubmit, frame };
}
