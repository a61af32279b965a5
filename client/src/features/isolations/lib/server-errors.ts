import type { FieldValues, Path, UseFormSetError } from 'react-hook-form';
import { ApiError } from '@client/lib/api-client';

/**
 * Puts each of the server's field details beside its field; returns what is left to say above the
 * form (the message of a refusal that names no field, or of a field the form does not show).
 */
export function placeServerErrors<T extends FieldValues>(err: unknown, setError: UseFormSetError<T>, fieldOf: (path: string) => Path<T> | null): string | null {
  if (!(err instanceof ApiError)) return err instanceof Error ? err.message : 'Something went wrong.';
  let placed = 0;
  for (const d of err.details) {
    const field = fieldOf(d.path);
    if (!field) continue;
    setError(field, { message: d.message });
    placed++;
  }
  return placed && placed === err.details.length ? null : err.message;
}
