import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { Link, useSearchParams } from 'react-router-dom';
import { acceptInvitationInputSchema, type AcceptInvitationInput } from '@shared/schemas/auth.schema';
import { ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { useAcceptInvitation } from '../api/auth-mutations';
import { AuthFrame } from './sign-in';

export default function AcceptInvitationPage() {
  const [params] = useSearchParams();
  const accept = useAcceptInvitation();
  const form = useForm<AcceptInvitationInput>({ resolver: zodResolver(acceptInvitationInputSchema), defaultValues: { token: params.get('token') ?? '', name: '', password: '' } });
  return (
    <AuthFrame title="Accept your invitation">
      {accept.isSuccess ? (
        <Notice tone="safe" role="status">
          You are in. <Link to="/sign-in">Sign in</Link> with your e-mail and the password you chose.
        </Notice>
      ) : (
        <form
          noValidate
          className="flex flex-col gap-4"
          onSubmit={form.handleSubmit((v) =>
            accept.mutate(v, { onError: (e) => e instanceof ApiError && e.details.forEach((d) => form.setError(d.path as keyof AcceptInvitationInput, { message: d.message })) }),
          )}
        >
          <input type="hidden" {...form.register('token')} />
          <TextField label="Your name" autoComplete="name" {...form.register('name')} error={form.formState.errors.name?.message} />
          <TextField
            label="Password"
            type="password"
            autoComplete="new-password"
            hint="At least 12 characters. If you already have a Holdpoint account, enter its current password."
            {...form.register('password')}
            error={form.formState.errors.password?.message}
          />
          {accept.error ? <Notice tone="danger">{accept.error.message}</Notice> : null}
          <Button type="submit" busy={accept.isPending}>
            Accept and continue
          </Button>
        </form>
      )}
    </AuthFrame>
  );
}
