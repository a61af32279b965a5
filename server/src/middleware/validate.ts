import type { ZodError, ZodType } from 'zod';
import type { ErrorDetail } from '@shared/errors/error-codes';
import { AppError } from '../errors/app-error';

export function zodDetails(err: ZodError): ErrorDetail[] {
  return err.issues.map((i) => ({ path: i.path.map(String).join('.'), message: i.message }));
}

/** Parses a request part with a shared schema; a failure becomes a 400 with one detail per field. */
export function parse<T>(schema: ZodType<T>, value: unknown, what = 'request'): T {
  const result = schema.safeParse(value);
  if (!result.success) throw AppError.validation(`Some fields of the ${what} are missing or not valid.`, zodDetails(result.error));
  return result.data;
}
