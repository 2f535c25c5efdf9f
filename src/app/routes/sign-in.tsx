import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { Link, redirect, useNavigate, useSearchParams } from 'react-router-dom';
import { signInSchema, type SignInInput } from '../../../shared/api/auth.ts';
import { Button } from '../../components/ui/button.tsx';
import { TextField } from '../../components/ui/field.tsx';
import { Logo } from '../../components/ui/logo.tsx';
import { meQueryOptions } from '../../features/auth/api/get-me.ts';
import { useSignIn } from '../../features/auth/api/sign-in.ts';
import { paths } from '../../config/paths.ts';
import { queryClient } from '../../lib/query-client.ts';
import { homeFor } from '../nav.ts';

export async function signInLoader() {
  const me = await queryClient.ensureQueryData(meQueryOptions());
  if (me.user) throw redirect(homeFor(me.user.role));
  return null;
}

/** Only same-site paths are followed after sign-in. */
const safeNext = (next: string | null) => (next && next.startsWith('/') && !next.startsWith('//') ? next : null);

export function AuthCard({ title, children }: { title: string; children: React.ReactNode }) {
  return (
    <main className="flex min-h-screen items-center justify-center bg-slate-900 px-4 py-12">
      <div className="w-full max-w-sm">
        <div className="mb-6 flex items-center justify-center gap-2 text-white">
          <Logo className="h-9 w-9" />
          <span className="text-2xl font-semibold tracking-tight">Loadline</span>
        </div>
        <div className="rounded-xl bg-white p-6 shadow-xl">
          <h1 className="mb-4 text-lg font-semibold text-slate-900">{title}</h1>
          {children}
        </div>
        <p className="mt-6 text-center text-xs text-slate-300">The charging-system bench for automotive programs</p>
      </div>
    </main>
  );
}

export function SignInPage() {
  const signIn = useSignIn();
  const navigate = useNavigate();
  const [params] = useSearchParams();
  const form = useForm<SignInInput>({ resolver: zodResolver(signInSchema), defaultValues: { email: '', password: '' } });
  const onSubmit = form.handleSubmit((values) =>
    signIn.mutate(values, {
      onSuccess: (me) => {
        if (me.user) void navigate(safeNext(params.get('next')) ?? homeFor(me.user.role), { replace: true });
      },
    }),
  );
  return (
    <AuthCard title="Sign in">
      <form onSubmit={onSubmit} className="space-y-4" noValidate>
        <TextField label="E-mail" type="email" autoComplete="username" {...form.register('email')} error={form.formState.errors.email?.message} />
        <TextField
          label="Password"
          type="password"
          autoComplete="current-password"
          {...form.register('password')}
          error={form.formState.errors.password?.message}
        />
        {signIn.error && (
          <p role="alert" className="rounded-md bg-stop-100 px-3 py-2 text-sm text-stop-700">
            {signIn.error.message}
          </p>
        )}
        <Button type="submit" className="w-full" disabled={signIn.isPending}>
          {signIn.isPending ? 'Signing in…' : 'Sign in'}
        </Button>
        <p className="text-center text-sm">
          <Link to={paths.forgotPassword.href()} className="text-slate-600 underline underline-offset-2 hover:text-slate-900">
            Forgot your password?
          </Link>
        </p>
      </form>
    </AuthCard>
  );
}
