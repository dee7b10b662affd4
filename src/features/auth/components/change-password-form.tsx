import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { z } from 'zod';
import { ChangePasswordBodySchema, type Me } from '../../../../shared/schemas/auth';
import { Button } from '../../../components/ui/button';
import { TextField, FormError } from '../../../components/ui/field';
import { isApiError } from '../../../lib/api-client';
import { useChangePassword } from '../api/change-password';

const FormSchema = ChangePasswordBodySchema.extend({ repeat: z.string() })
  .refine((v) => v.next === v.repeat, { message: 'The two new passwords differ', path: ['repeat'] })
  .refine((v) => v.next !== v.current, { message: 'Choose a password you have not used here', path: ['next'] });
type Values = z.infer<typeof FormSchema>;

export interface ChangePasswordFormProps {
  onChanged: (me: Me) => void;
  /** Shown after a reset or an invite: the password just given is the current one. */
  required?: boolean;
}

/** Current password, the new one twice. Other sessions of the user end when it is saved. */
export function ChangePasswordForm({ onChanged, required = false }: ChangePasswordFormProps) {
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors, isSubmitting },
  } = useForm<Values, unknown, Values>({ resolver: zodResolver(FormSchema), defaultValues: { current: '', next: '', repeat: '' } });
  const mutation = useChangePassword({ onSuccess: onChanged });

  const onSubmit = handleSubmit(async ({ current, next }) => {
    try {
      await mutation.mutateAsync({ current, next });
    } catch (e) {
      if (!isApiError(e)) return setError('root', { message: 'Something went wrong. Try again.' });
      let placed = false;
      for (const name of ['current', 'next'] as const) {
        const msg = e.fieldMessage(name);
        if (msg) {
          setError(name, { message: msg });
          placed = true;
        }
      }
      if (!placed) setError('root', { message: e.message });
    }
  });

  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4" aria-describedby={errors.root ? 'password-error' : undefined}>
      <FormError message={errors.root?.message} id="password-error" />
      <TextField
        label={required ? 'Password you were given' : 'Current password'}
        type="password"
        autoComplete="current-password"
        error={errors.current?.message}
        {...register('current')}
      />
      <TextField label="New password" type="password" autoComplete="new-password" hint="At least 10 characters; not a common password" error={errors.next?.message} {...register('next')} />
      <TextField label="New password again" type="password" autoComplete="new-password" error={errors.repeat?.message} {...register('repeat')} />
      <Button type="submit" size="lg" loading={isSubmitting || mutation.isPending} className="mt-2 w-full">
        Save new password
      </Button>
    </form>
  );
}
