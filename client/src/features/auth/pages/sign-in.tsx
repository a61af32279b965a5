import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { Link, Navigate, useNavigate, useSearchParams } from 'react-router-dom';
import { useQuery } from '@tanstack/react-query';
import { signInInputSchema, type SignInInput } from '@shared/schemas/sign-in.schema';
import { api, ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { useSignIn } from '../api/auth-mutations';
import { useMe } from '../api/get-me';
import { safeNextPath } from '../lib/safe-next-path';

const demoAccounts = [
  ['admin@bramblecote.example', 'Tenant admin'],
  ['authoriser@bramblecote.example', 'Authoriser'],
  ['control@bramblecote.example', 'Control room'],
  ['lead@oxbow-repair.example', 'Contractor lead'],
  ['tech@oxbow-repair.example', 'Isolation technician + gas tester'],
  ['auditor@bramblecote.example', 'Auditor'],
  ['authoriser@harlowridge.example', 'Authoriser, second tenant'],
] as const;

export function AuthFrame({ title, children }: { title: string; children: React.ReactNode }) {
  return (
    <div className="flex min-h-screen items-start justify-center bg-brand px-4 py-10 sm:items-center">
      <main className="w-full max-w-md rounded-card bg-surface p-6 shadow-xl">
        <p className="text-sm font-bold tracking-widest text-brand uppercase">Holdpoint</p>
        <h1 className="mb-4 text-2xl font-bold text-brand-strong">{title}</h1>
        {children}
      </main>
    </div>
  );
}

export default function SignInPage() {
  const [params] = useSearchParams();
  const navigate = useNavigate();
  const { data: me } = useMe();
  const signIn = useSignIn();
  const meta = useQuery({ queryKey: ['meta'], queryFn: () => api.get<{ demo: boolean }>('/api/meta'), staleTime: Infinity });
  const form = useForm<SignInInput>({ resolver: zodResolver(signInInputSchema), defaultValues: { email: '', password: '' } });
  const next = safeNextPath(params.get('next'));

  if (me) return <Navigate to={next} replace />;

  const onSubmit = form.handleSubmit((values) =>
    signIn.mutate(values, {
      onSuccess: () => navigate(next, { replace: true }),
      onError: (err) => {
        if (err instanceof ApiError) for (const d of err.details) form.setError(d.path as keyof SignInInput, { message: d.message });
      },
    }),
  );

  return (
    <AuthFrame title="Sign in">
      <p className="mb-4 text-sm text-ink-soft">Permits to work and isolations for pipeline repair, shared by operators, contractors and the control room.</p>
      <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4">
        <TextField label="E-mail" type="email" autoComplete="username" {...form.register('email')} error={form.formState.errors.email?.message} />
        <TextField label="Password" type="password" autoComplete="current-password" {...form.register('password')} error={form.formState.errors.password?.message} />
        {signIn.error ? (
          <Notice tone="danger" role="alert">
            {signIn.error.message}
          </Notice>
        ) : null}
        <Button type="submit" busy={signIn.isPending}>
          Sign in
        </Button>
        <Link to="/forgot-password" className="inline-flex min-h-11 items-center self-start text-sm">
          Forgot your password?
        </Link>
      </form>
      {meta.data?.demo ? (
        <details className="mt-6 rounded-md border border-line p-3 text-sm" open>
          <summary className="cursor-pointer font-semibold">Demo accounts (password: holdpoint-demo)</summary>
          <ul className="mt-2 flex flex-col gap-1">
            {demoAccounts.map(([email, role]) => (
              <li key={email}>
                <button
                  type="button"
                  className="min-h-11 w-full rounded-md px-2 text-left hover:bg-brand-soft"
                  onClick={() => {
                    form.setValue('email', email, { shouldValidate: form.formState.isSubmitted });
                    form.setValue('password', 'holdpoint-demo', { shouldValidate: form.formState.isSubmitted });
                  }}
                >
                  <span className="font-medium">{email}</span> <span className="text-ink-soft">— {role}</span>
                </button>
              </li>
            ))}
          </ul>
        </details>
      ) : null}
    </AuthFrame>
  );
}
