import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { Link, useSearchParams } from 'react-router-dom';
import { z } from 'zod';
import { emailSchema, passwordSchema } from '../../../shared/api/auth.ts';
import { Button } from '../../components/ui/button.tsx';
import { TextField } from '../../components/ui/field.tsx';
import { useRequestReset, useSetPassword } from '../../features/auth/api/password.ts';
import { paths } from '../../config/paths.ts';
import { AuthCard } from './sign-in.tsx';

const forgotSchema = z.object({ email: emailSchema });

export function ForgotPasswordPage() {
  const reset = useRequestReset();
  const form = useForm<{ email: string }>({ resolver: zodResolver(forgotSchema), defaultValues: { email: '' } });
  return (
    <AuthCard title="Reset your password">
      {reset.isSuccess ? (
        <p className="text-sm text-slate-700" role="status">
          {reset.data.message} Check your inbox, then follow the link within an hour.
        </p>
      ) : (
        <form onSubmit={form.handleSubmit((v) => reset.mutate(v.email))} className="space-y-4" noValidate>
          <TextField label="E-mail" type="email" autoComplete="username" {...form.register('email')} error={form.formState.errors.email?.message} />
          {reset.error && <p role="alert" className="text-sm text-stop-700">{reset.error.message}</p>}
          <Button type="submit" className="w-full" disabled={reset.isPending}>
            Send reset link
          </Button>
        </form>
      )}
      <p className="mt-4 text-center text-sm">
        <Link to={paths.signIn.href()} className="text-slate-600 underline underline-offset-2">
          Back to sign in
        </Link>
      </p>
    </AuthCard>
  );
}

const newPasswordSchema = z
  .object({ password: passwordSchema, confirm: z.string() })
  .refine((v) => v.password === v.confirm, { path: ['confirm'], message: 'The two passwords differ' });

export function SetPasswordPage() {
  const [params] = useSearchParams();
  const token = params.get('token') ?? '';
  const set = useSetPassword();
  const form = useForm<{ password: string; confirm: string }>({ resolver: zodResolver(newPasswordSchema), defaultValues: { password: '', confirm: '' } });
  return (
    <AuthCard title="Choose a password">
      {set.isSuccess ? (
        <div className="space-y-4 text-sm" role="status">
          <p>Your password is set.</p>
          <Link to={paths.signIn.href()} className="font-medium text-live-700 underline underline-offset-2">
            Sign in now
          </Link>
        </div>
      ) : !token ? (
        <p role="alert" className="text-sm text-stop-700">
          This link is incomplete. Open the link from your e-mail again, or ask for a new one.
        </p>
      ) : (
        <form onSubmit={form.handleSubmit((v) => set.mutate({ token, password: v.password }))} className="space-y-4" noValidate>
          <TextField label="New password" type="password" autoComplete="new-password" hint="At least 10 characters." {...form.register('password')} error={form.formState.errors.password?.message} />
          <TextField label="Repeat it" type="password" autoComplete="new-password" {...form.register('confirm')} error={form.formState.errors.confirm?.message} />
          {set.error && <p role="alert" className="text-sm text-stop-700">{set.error.message}</p>}
          <Button type="submit" className="w-full" disabled={set.isPending}>
            Set password
          </Button>
        </form>
      )}
    </AuthCard>
  );
}
