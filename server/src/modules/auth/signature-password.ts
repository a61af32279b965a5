import { QueryTypes } from 'sequelize';
import type { AppDeps } from '../../deps';
import { verifyPassword } from '../../lib/passwords';
import { attemptLimits } from './attempt-limits';

/**
 * The signer's password, typed again to sign a permit action or a handover. Wrong passwords are
 * limited per person (attempt-limits.ts): past the limit this throws 429 before checking anything.
 * A missing password is a form error, not a guess, and is not counted.
 */
export async function signerPasswordMatches(deps: AppDeps, userId: string, password: string | undefined): Promise<boolean> {
  const limits = attemptLimits(deps);
  limits.checkSignature(userId);
  if (!password) return false;
  const [row] = await deps.sequelize.query<{ password_hash: string | null }>(`SELECT password_hash FROM users WHERE id = :id`, { replacements: { id: userId }, type: QueryTypes.SELECT });
  const ok = await verifyPassword(row?.password_hash, password);
  if (ok) limits.signatureSucceeded(userId);
  else limits.signatureFailed(userId);
  return ok;
}
