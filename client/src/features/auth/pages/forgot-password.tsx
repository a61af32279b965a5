import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { Link } from 'react-router-dom';
import { forgotPasswordInputSchema } from '@shared/schemas/auth.schema';
import { Button } from '@client/components/ui/button';
import { TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { useForgotPassword } from '../api/auth-mutations';
import { AuthFrame } from './sign-in';

export default function ForgotPasswordPage() {
  const forgot = useForgotPassword();
  const form = useForm<{ email: string }>({ resolver: zodResolver(forgotPasswordInputSchema), defaultValues: { email: '' } });
  return (
    <AuthFrame title="Reset your password">
      {forgot.isSuccess ? (
        <Notice tone="info" role="status">
          {forgot.data.message}
        </Notice>
      ) : (
        <form noValidate onSubmit={form.handleSubmit(({ email }) => forgot.mutate(email))} className="flex flex-col gap-4">
          <TextField label="E-mail" type="email" autoComplete="username" {...form.register('email')} error={form.formState.errors.email?.message} />
          {forgot.error ? <Notice tone="danger">{forgot.error.message}</Notice> : null}
          <Button type="submit" busy={forgot.isPending}>
            Send a reset link
          </Button>
        </form>
      )}
      <Link to="/sign-in" className="mt-4 inline-flex min-h-11 items-center text-sm">
        Back to sign-in
      </Link>
    </AuthFrame>
  );
}
