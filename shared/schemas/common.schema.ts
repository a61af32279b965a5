import { z } from 'zod';

export const uuidSchema = z.uuid({ message: 'Must be a valid identifier.' });

export const pageQuerySchema = z.object({
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(25),
});
export type PageQuery = z.infer<typeof pageQuerySchema>;

export interface Page<T> {
  items: T[];
  total: number;
  page: number;
  pageSize: number;
}

/** Free text from people: trimmed, no control characters, bounded. */
export const textField = (max: number, label = 'This field') =>
  z
    .string({ message: `${label} must be text.` })
    .trim()
    .max(max, `${label} must be at most ${max} characters.`)
    // eslint-disable-next-line no-control-regex -- refusing control characters is the point
    .refine((s) => !/[\u0000-\u0008\u000B\u000C\u000E-\u001F]/.test(s), `${label} contains characters that are not allowed.`);

export const requiredText = (max: number, label = 'This field') => textField(max, label).pipe(z.string().min(1, `${label} is required.`));
