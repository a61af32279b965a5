import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { Link, useSearchParams } from 'react-router-dom';
import { resetPasswordInputSchema, type ResetPasswordInput } from '@shared/schemas/auth.schema';
import { ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { useResetPassword } from '../api/auth-mutations';
import { AuthFrame } from './sign-in';

export default function ResetPasswordPage() {
  const [params] = useSearchParams();
  const reset = useResetPassword();
  const form = useForm<ResetPasswordInput>({ resolver: zodResolver(resetPasswordInputSchema), defaultValues: { token: params.get('token') ?? '', password: '' } });
  return (
    <AuthFrame title="Choose a new password">
      {reset.isSuccess ? (
        <Notice tone="safe" role="status">
          Your password has been changed. <Link to="/sign-in">Sign in</Link> with it now.
        </Notice>
      ) : (
        <form
          noValidate
          className="flex flex-col gap-4"
          onSubmit={form.handleSubmit((v) =>
            reset.mutate(v, { onError: (e) => e instanceof ApiError && e.details.forEach((d) => form.setError(d.path as keyof ResetPasswordInput, { message: d.message })) }),
          )}
        >
          <input type="hidden" {...form.register('token')} />
          <TextField label="New password" type="password" autoComplete="new-password" hint="At least 12 characters." {...form.register('password')} error={form.formState.errors.password?.message} />
          {reset.error ? <Notice tone="danger">{reset.error.message}</Notice> : null}
          {form.formState.errors.token ? <Notice tone="danger">This link is incomplete. Open the link from the e-mail again.</Notice> : null}
          <Button type="submit" busy={reset.isPending}>
            Save the new password
          </Button>
        </form>
      )}
    </AuthFrame>
  );
}
