import { z } from 'zod';
import { requiredText, uuidSchema } from './common.schema';
import { emailSchema } from './sign-in.schema';

/** A signature as on a permit: the name typed as on the account and the password again. */
const signatureFields = {
  password: z.string({ message: 'Re-enter your password to sign.' }).min(1, 'Re-enter your password to sign.').max(256),
  signedName: requiredText(120, 'Typed name'),
};

/**
 * The oncoming person, present at the handover, signs on the same screen with their own sign-in
 * e-mail, name and password: no list of people is needed, and nobody signs for anyone else.
 */
const oncomingSchema = z.strictObject({ email: emailSchema, ...signatureFields });

/**
 * POST /api/permits/:id/isolations/:stepId/transfer: shift change on one isolation (OSHA 29 CFR
 * 1910.147(f)(4)). The holder (signed in) hands over; the oncoming person's own lock (and tag, where
 * the step carries one) goes on as the holder's comes off. Both sign.
 */
export const lockTransferInputSchema = z.strictObject({
  oncoming: oncomingSchema,
  lockId: uuidSchema.optional(),
  tagId: uuidSchema.optional(),
  ...signatureFields,
});
export type LockTransferInput = z.infer<typeof lockTransferInputSchema>;

/**
 * POST /api/permits/:id/crew/hand-over: shift change on the lockbox. The signed-in person's personal
 * lock comes off as the oncoming person's goes on, both signing.
 */
export const crewHandOverInputSchema = z.strictObject({
  oncoming: oncomingSchema,
  personalLockNumber: requiredText(40, 'Personal lock number'),
  ...signatureFields,
});
export type CrewHandOverInput = z.infer<typeof crewHandOverInputSchema>;

/**
 * POST /api/permits/:id/crew/:userId/remove: a crew member's personal lock taken off while they are
 * away, under an authoriser's recorded exception (OSHA 29 CFR 1910.147(e)(3)); the remover signs.
 */
export const crewLockRemovalInputSchema = z.strictObject({ ...signatureFields });
export type CrewLockRemovalInput = z.infer<typeof crewLockRemovalInputSchema>;
