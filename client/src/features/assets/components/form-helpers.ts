import type { FieldValues, Path, UseFormSetError } from 'react-hook-form';
import { ApiError } from '@client/lib/api-client';

/** For number inputs: an empty box is "not given" (undefined for required fields, null to clear optional ones). */
export const numberOrUndefined = (v: unknown) => (v === '' || v === null || v === undefined ? undefined : Number(v));
export const numberOrNull = (v: unknown) => (v === '' || v === null || v === undefined ? null : Number(v));
export const textOrNull = (v: unknown) => (typeof v === 'string' && v.trim() === '' ? null : v);

/**
 * Puts the server's answer beside the fields it names (400 details, or the field a 409 names) and
 * returns what is left for a general message.
 */
export function applyServerErrors<T extends FieldValues>(err: Error, setError: UseFormSetError<T>, fields: readonly string[]): string | null {
  if (!(err instanceof ApiError)) return err.message;
  const named = typeof err.body.field === 'string' ? [{ path: err.body.field, message: err.message }] : err.details;
  const placed = named.filter((d) => fields.some((f) => d.path === f || d.path.startsWith(`${f}.`)));
  placed.forEach((d) => setError(d.path as Path<T>, { message: d.message }));
  return placed.length === named.length && placed.length > 0 ? null : err.message;
}
