import { safeParse, type core, type ZodError } from 'zod';
import type { ErrorDetail } from '@shared/errors/error-codes';
import { AppError } from '../errors/app-error';

export function zodDetails(err: ZodError): ErrorDetail[] {
  return err.issues.map((i) => ({ path: i.path.map(String).join('.'), message: i.message }));
}

/**
 * Parses a request part with a shared schema; a failure becomes a 400 with one detail per field.
 * Takes any zod schema, chained (`zod`) or functional (`zod/mini`, as the sign-in input is).
 */
export function parse<T>(schema: core.$ZodType<T>, value: unknown, what = 'request'): T {
  const result = safeParse(schema, value);
  if (!result.success) throw AppError.validation(`Some fields of the ${what} are missing or not valid.`, zodDetails(result.error));
  return result.data;
}
