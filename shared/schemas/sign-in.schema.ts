// The sign-in input, written with zod's tree-shakeable functional API (`zod/mini`): the sign-in page is the
// first screen most people load, and with `zod/mini` it carries the validator without zod's method-chaining
// layer and JSON Schema generator (about 10 KB gzip). `auth.schema.ts` re-exports both schemas, so the
// server and the other forms use them as before; the checks and messages are the same as the chained form
// (`.trim().toLowerCase().max(…).pipe(z.email(…))`).
import * as z from 'zod/mini';

export const emailSchema = z.pipe(
  z.string({ message: 'E-mail is required.' }).check(z.trim(), z.toLowerCase(), z.maxLength(254, 'E-mail is too long.')),
  z.email({ message: 'Enter a valid e-mail address.' }),
);

export const signInInputSchema = z.strictObject({
  email: emailSchema,
  password: z.string({ message: 'Password is required.' }).check(z.minLength(1, 'Password is required.'), z.maxLength(256, 'Password is too long.')),
});
export type SignInInput = z.infer<typeof signInInputSchema>;
