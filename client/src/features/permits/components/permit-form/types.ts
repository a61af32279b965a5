import type { UseFormReturn } from 'react-hook-form';
import type { CreatePermitData, CreatePermitInput } from '@shared/schemas/permit.schema';
import type { PermitField } from '../../lib/form-steps';

export type PermitFormApi = UseFormReturn<CreatePermitInput, unknown, CreatePermitData>;

/** The message to show beside a field, whatever shape its error has (arrays carry it on the root). */
export function fieldError(form: PermitFormApi, name: PermitField): string | undefined {
  const e = form.formState.errors[name] as { message?: string; root?: { message?: string } } | Array<{ message?: string } | undefined> | undefined;
  if (!e) return undefined;
  if (Array.isArray(e)) return e.find((x) => x?.message)?.message;
  return e.message ?? e.root?.message;
}

/** Empty number inputs mean "not given", not zero. */
export const optionalNumber = (v: unknown) => (v === '' || v === null || v === undefined ? undefined : Number(v));
