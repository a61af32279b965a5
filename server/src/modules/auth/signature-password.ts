import { QueryTypes } from 'sequelize';
import { signatureMessages, signedNameMatches } from '@shared/permit/signed-name';
import type { AppDeps } from '../../deps';
import { AppError } from '../../errors/app-error';
import { verifyPassword } from '../../lib/passwords';
import { attemptLimits } from './attempt-limits';

/**
 * The signer's password, typed again to sign a permit action or a handover. Wrong passwords are
 * limited per person (attempt-limits.ts): past the limit this throws 429 before checking anything.
 * A missing password is a form error, not a guess, and is not counted.
 */
export async function signerPasswordMatches(deps: AppDeps, userId: string, password: string | undefined): Promise<boolean> {
  const limits = attemptLimits(deps);
  const failedBefore = await limits.checkSignature(userId);
  if (!password) return false;
  const [row] = await deps.sequelize.query<{ password_hash: string | null }>(`SELECT password_hash FROM users WHERE id = :id`, { replacements: { id: userId }, type: QueryTypes.SELECT });
  const ok = await verifyPassword(row?.password_hash, password);
  // A right password forgets earlier wrong ones (nothing to forget: no statement).
  if (!ok) await limits.signatureFailed(userId);
  else if (failedBefore) await limits.signatureSucceeded(userId);
  return ok;
}

/**
 * A signature as on a permit: the name typed as shown on the account (case and spacing forgiven,
 * nothing else) and the password again. Refuses with 400 naming each field that is wrong; a wrong
 * password is told apart from a missing one.
 */
export async function requireSignature(deps: AppDeps, signer: { id: string; name: string }, input: { password?: string; signedName?: string }) {
  const details: { path: string; message: string }[] = [];
  if (!signedNameMatches(input.signedName, signer.name)) details.push({ path: 'signedName', message: signatureMessages.name(signer.name) });
  if (!(await signerPasswordMatches(deps, signer.id, input.password)))
    details.push({ path: 'password', message: input.password ? signatureMessages.passwordWrong : signatureMessages.passwordMissing });
  if (details.length) throw AppError.validation(details.some((d) => d.path === 'password' && input.password) ? 'The password is wrong.' : 'The signature is not complete.', details);
}
