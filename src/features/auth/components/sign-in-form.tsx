import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { LoginBodySchema, type Me } from '../../../../shared/schemas/auth';
import { Button } from '../../../components/ui/button';
import { TextField, FormError } from '../../../components/ui/field';
import { isApiError } from '../../../lib/api-client';
import { useLogin } from '../api/login';

export const TOO_MANY_ATTEMPTS = 'Too many attempts. Wait a few minutes, then try again.';

export interface SignInFormProps {
  onSignedIn: (me: Me) => void;
}

type Values = { email: string; password: string };

export function SignInForm({ onSignedIn }: SignInFormProps) {
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors, isSubmitting },
  } = useForm<Values, unknown, Values>({
    resolver: zodResolver(LoginBodySchema),
    defaultValues: { email: '', password: '' },
  });
  const loginMutation = useLogin({ onSuccess: onSignedIn });

  const onSubmit = handleSubmit(async (values) => {
    try {
      await loginMutation.mutateAsync(values);
    } catch (e) {
      if (!isApiError(e)) {
        setError('root', { message: 'Something went wrong. Try again.' });
        return;
      }
      if (e.status === 429) {
        setError('root', { message: TOO_MANY_ATTEMPTS });
        return;
      }
      let placed = false;
      for (const name of ['email', 'password'] as const) {
        const msg = e.fieldMessage(name);
        if (msg) {
          setError(name, { message: msg });
          placed = true;
        }
      }
      if (!placed || e.status === 401) setError('root', { message: e.message });
    }
  });

  const busy = isSubmitting || loginMutation.isPending;

  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4" aria-describedby={errors.root ? 'sign-in-error' : undefined}>
      <FormError message={errors.root?.message} id="sign-in-error" />
      <TextField
        label="Email"
        type="email"
        autoComplete="username"
        inputMode="email"
        error={errors.email?.message}
        {...register('email')}
      />
      <TextField
        label="Password"
        type="password"
        autoComplete="current-password"
        error={errors.password?.message}
        {...register('password')}
      />
      <Button type="submit" size="lg" loading={busy} className="mt-2 w-full">
        Sign in
      </Button>
    </form>
  );
}
