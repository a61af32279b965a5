import { z } from 'zod';
import { roles, qualificationKinds } from '../abilities/roles';
import { isoDateField, requiredText, uuidSchema } from './common.schema';
import { emailSchema } from './sign-in.schema';

// The sign-in input lives in its own module so the sign-in page loads only what it needs.
export { emailSchema, signInInputSchema, type SignInInput } from './sign-in.schema';

// ASVS 6.2.x: length over composition rules, and a refusal of well-known passwords.
const commonPasswords = new Set([
  'password1234', '123456789012', 'qwertyuiop12', 'passwordpassword', 'letmein12345', 'welcome12345', 'iloveyou1234',
  'administrator', 'changeme1234', 'holdpoint123', 'qwerty123456', '111111111111', '000000000000', 'abc123456789',
]);

export const newPasswordSchema = z
  .string({ message: 'Password is required.' })
  .min(12, 'Use at least 12 characters.')
  .max(128, 'Use at most 128 characters.')
  .refine((p) => !commonPasswords.has(p.toLowerCase()), 'That password is too common; choose another.');

export const switchTenantInputSchema = z.strictObject({ tenantId: uuidSchema });

export const inviteInputSchema = z.strictObject({
  email: emailSchema,
  organisationId: uuidSchema,
  role: z.enum(roles, { message: 'Choose a role.' }),
});
export type InviteInput = z.infer<typeof inviteInputSchema>;

export const acceptInvitationInputSchema = z.strictObject({
  token: z.string().min(20).max(200),
  name: requiredText(120, 'Name'),
  password: newPasswordSchema,
});
export type AcceptInvitationInput = z.infer<typeof acceptInvitationInputSchema>;

export const forgotPasswordInputSchema = z.strictObject({ email: emailSchema });
export const resetPasswordInputSchema = z.strictObject({ token: z.string().min(20).max(200), password: newPasswordSchema });
export type ResetPasswordInput = z.infer<typeof resetPasswordInputSchema>;

export const organisationInputSchema = z.strictObject({
  name: requiredText(160, 'Name'),
  kind: z.enum(['operator', 'contractor'], { message: 'Choose operator or contractor.' }),
});
export type OrganisationInput = z.infer<typeof organisationInputSchema>;

const isoDate = isoDateField();

export const qualificationInputSchema = z
  .strictObject({
    userId: uuidSchema,
    kind: z.enum(qualificationKinds, { message: 'Choose a qualification.' }),
    reference: z.string().trim().max(120).optional(),
    issuedOn: isoDate,
    expiresOn: isoDate,
  })
  .refine((q) => q.expiresOn >= q.issuedOn, { message: 'The expiry date must not be before the issue date.', path: ['expiresOn'] });
export type QualificationInput = z.infer<typeof qualificationInputSchema>;

export const membershipRoleInputSchema = z.strictObject({ role: z.enum(roles, { message: 'Choose a role.' }) });

export const usersQuerySchema = z.strictObject({
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(25),
  q: z.string().trim().max(100).optional(),
  role: z.enum(roles).optional(),
  organisationId: uuidSchema.optional(),
  sort: z.enum(['name', 'email', 'role', 'organisation']).default('name'),
  dir: z.enum(['asc', 'desc']).default('asc'),
});
export type UsersQuery = z.infer<typeof usersQuerySchema>;
