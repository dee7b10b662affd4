import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { ROLES } from '../../../../shared/schemas/auth';
import { InviteUserBodySchema, type InviteUserBody, type User } from '../../../../shared/schemas/users';
import { Button } from '../../../components/ui/button';
import { SelectField, TextField, FormError } from '../../../components/ui/field';
import { applyServerErrors } from '../../../lib/form-errors';
import { ROLE_LABELS } from '../../../lib/authorization';
import { useInviteUser } from '../api/invite-user';

export interface InviteUserFormProps {
  onInvited: (user: User) => void;
  onCancel?: () => void;
}

const FIELDS = ['email', 'name', 'role', 'password'] as const;

export function InviteUserForm({ onInvited, onCancel }: InviteUserFormProps) {
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors, isSubmitting },
  } = useForm<InviteUserBody, unknown, InviteUserBody>({
    resolver: zodResolver(InviteUserBodySchema),
    criteriaMode: 'all',
    defaultValues: { email: '', name: '', role: 'technician', password: '' },
  });
  const invite = useInviteUser();

  const onSubmit = handleSubmit(async (values) => {
    try {
      const user = await invite.mutateAsync(values);
      onInvited(user);
    } catch (e) {
      // Server field errors go next to their field, all at once; anything else above the form.
      applyServerErrors(e, setError, FIELDS);
    }
  });

  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4">
      <FormError message={errors.root?.message} />
      <TextField label="Name" autoComplete="off" error={errors.name?.message} {...register('name')} />
      <TextField label="Email" type="email" autoComplete="off" error={errors.email?.message} {...register('email')} />
      <SelectField
        label="Role"
        options={ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] }))}
        error={errors.role?.message}
        {...register('role')}
      />
      <TextField
        label="Initial password"
        type="password"
        autoComplete="new-password"
        hint="At least 10 characters. Give it to the person yourself, not by email."
        error={errors.password?.message}
        {...register('password')}
      />
      <div className="flex justify-end gap-2 pt-2">
        {onCancel && (
          <Button variant="secondary" onClick={onCancel}>
            Cancel
          </Button>
        )}
        <Button type="submit" loading={isSubmitting || invite.isPending}>
          Invite
        </Button>
      </div>
    </form>
  );
}
