import { describe, expect, it } from 'vitest';
import { safeParse } from 'zod/mini';
import { forgotPasswordInputSchema, inviteInputSchema, signInInputSchema } from '@shared/schemas/auth.schema';

// The sign-in input is written with `zod/mini` (it ships on the first page people load); these pin what the
// chained version did, so the page and the server keep giving the same answers.
const messages = (value: unknown) => {
  const r = safeParse(signInInputSchema, value);
  return r.success ? r.data : Object.fromEntries(r.error.issues.map((i) => [i.path.join('.'), i.message]));
};

describe('the sign-in input', () => {
  it('when the address has spaces and capitals, then it signs in with the trimmed, lower-cased address', () => {
    expect(messages({ email: '  Admin@Bramblecote.Example ', password: 'x' })).toEqual({ email: 'admin@bramblecote.example', password: 'x' });
  });

  it('when both fields are empty, then each field gets its own message', () => {
    expect(messages({ email: '', password: '' })).toEqual({ email: 'Enter a valid e-mail address.', password: 'Password is required.' });
  });

  it('when the fields are missing or not text, then each says it is required', () => {
    expect(messages({})).toEqual({ email: 'E-mail is required.', password: 'Password is required.' });
    expect(messages({ email: 7, password: 7 })).toEqual({ email: 'E-mail is required.', password: 'Password is required.' });
  });

  it('when the address or the password is too long, then it says so', () => {
    expect(messages({ email: `${'x'.repeat(250)}@a.example`, password: 'x'.repeat(257) })).toEqual({ email: 'E-mail is too long.', password: 'Password is too long.' });
    expect(messages({ email: 'a@b.example', password: 'x'.repeat(256) })).toEqual({ email: 'a@b.example', password: 'x'.repeat(256) });
  });

  it('when the address has no domain, then it is not a valid address', () => {
    expect(messages({ email: 'ellis.marr-at-fenwick', password: 'x' })).toEqual({ email: 'Enter a valid e-mail address.' });
  });

  it('when other forms (chained zod) use the same e-mail rule, then they trim, lower-case and refuse alike', () => {
    expect(forgotPasswordInputSchema.parse({ email: ' X@Y.Example ' })).toEqual({ email: 'x@y.example' });
    expect(inviteInputSchema.safeParse({ email: 'bad' }).error?.issues.find((i) => i.path[0] === 'email')?.message).toBe('Enter a valid e-mail address.');
  });
});
