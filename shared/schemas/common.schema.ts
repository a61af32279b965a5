import { z } from 'zod';

export const uuidSchema = z.uuid({ message: 'Must be a valid identifier.' });

export const pageQuerySchema = z.strictObject({
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

// With the u flag a surrogate pair is one code point, so this matches only a lone half of one.
const LONE_SURROGATE = /\p{Cs}/u;

/**
 * Text PostgreSQL stores exactly as it was sent: no NUL (text cannot hold it) and no lone UTF-16
 * surrogate (JSON can carry half of an emoji; it would be stored as U+FFFD, so the record and any
 * hash taken of it would no longer match).
 */
export const isStorableText = (s: string) => !s.includes('\u0000') && !LONE_SURROGATE.test(s);
export const unstorableTextMessage = 'Contains a broken or hidden character that cannot be saved. Type this text again.';

/** Free text from people: trimmed, no control characters, well-formed, bounded. */
export const textField = (max: number, label = 'This field') =>
  z
    .string({ message: `${label} must be text.` })
    .refine(isStorableText, { message: `${label} contains a broken or hidden character that cannot be saved. Type it again.`, abort: true })
    .trim()
    .max(max, `${label} must be at most ${max} characters.`)
    // eslint-disable-next-line no-control-regex -- refusing control characters is the point
    .refine((s) => !/[\u0000-\u0008\u000B\u000C\u000E-\u001F]/.test(s), `${label} contains characters that are not allowed.`);

export const requiredText = (max: number, label = 'This field') => textField(max, label).pipe(z.string().min(1, `${label} is required.`));

// PostgreSQL has no year 0 and JavaScript writes years past 9999 with a sign: outside these a date
// cannot be stored or written back as it came, whatever its offset.
const EARLIEST = Date.parse('0001-01-01T00:00:00Z');
const LATEST = Date.parse('9999-12-31T23:59:59.999Z');
const storableInstant = (s: string) => {
  const t = Date.parse(s);
  return t >= EARLIEST && t <= LATEST;
};
const yearMessage = 'Check the year: it must be between 0001 and 9999.';

/** A date and time with its offset (2026-12-02T07:00:00Z), in years PostgreSQL and JavaScript agree on. */
export const isoDateTimeField = (message = 'Use a date and time like 2026-12-02T07:00:00Z.') =>
  z.iso.datetime({ offset: true, message, abort: true }).refine(storableInstant, yearMessage);

/** A calendar date (2026-12-31) in years 0001 to 9999. */
export const isoDateField = (message = 'Use a date like 2026-12-31.') => z.iso.date({ message, abort: true }).refine((s) => s >= '0001-01-01', yearMessage);
