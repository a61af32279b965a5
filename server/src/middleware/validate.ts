import type { RequestHandler } from 'express';
import { safeParse, type core, type ZodError } from 'zod';
import type { ErrorDetail } from '@shared/errors/error-codes';
import { isStorableText, unstorableTextMessage } from '@shared/schemas/common.schema';
import { AppError } from '../errors/app-error';

/**
 * zod's own words for a value outside a list name the codes ('Invalid option: expected one of
 * "removed"|"displaced_by_product"'), which mean nothing to a site worker. A message the schema
 * wrote itself is kept; zod's default for a choice is replaced here, the one place issues become messages.
 */
function plainMessage(issue: core.$ZodIssue): string {
  const zodDefault = /^Invalid (option|input)\b/.test(issue.message);
  if (zodDefault && (issue.code === 'invalid_value' || issue.code === 'invalid_union')) return 'Choose one of the options offered.';
  return issue.message;
}

/** One detail per field path (the first problem found); a field the schema does not have is named on its own path. */
export function zodDetails(err: ZodError): ErrorDetail[] {
  const details = err.issues.flatMap((i) =>
    i.code === 'unrecognized_keys'
      ? i.keys.map((key) => ({ path: [...i.path, key].map(String).join('.'), message: 'This field is not accepted here; leave it out.' }))
      : [{ path: i.path.map(String).join('.'), message: plainMessage(i) }],
  );
  return details.filter((d, i) => details.findIndex((other) => other.path === d.path) === i);
}

/** No input of ours nests deeper than a handful of levels; this bounds every walk over a body. */
export const MAX_INPUT_DEPTH = 32;
const MAX_DETAILS = 20;

// A field name is echoed in the path of a detail, and the answer may be stored as jsonb (a replayed
// Idempotency-Key answer): it is shown with the unstorable characters replaced.
// eslint-disable-next-line no-control-regex -- NUL is one of the characters replaced
const shownPath = (path: string[]) => path.map((k) => k.replace(/\p{Cs}|\u0000/gu, '\uFFFD')).join('.');

/**
 * Every string and every key of a request part, however deep, is text PostgreSQL stores exactly as it
 * came (no lone surrogate, no NUL), and the part nests at most MAX_INPUT_DEPTH levels. Iterative, so a
 * hostile depth cannot overflow the stack.
 */
export function unstorableInput(value: unknown, maxDepth = MAX_INPUT_DEPTH): ErrorDetail[] {
  const found: ErrorDetail[] = [];
  const stack: Array<{ value: unknown; path: string[] }> = [{ value, path: [] }];
  while (stack.length && found.length < MAX_DETAILS) {
    const { value: v, path } = stack.pop()!;
    if (typeof v === 'string') {
      if (!isStorableText(v)) found.push({ path: shownPath(path), message: unstorableTextMessage });
      continue;
    }
    if (v === null || typeof v !== 'object') continue;
    if (path.length >= maxDepth) {
      found.push({ path: shownPath(path), message: `Nested more than ${maxDepth} levels deep.` });
      continue;
    }
    const entries: Array<[string, unknown]> = Array.isArray(v) ? v.map((x, i) => [String(i), x]) : Object.entries(v);
    for (const [k, x] of entries) {
      if (isStorableText(k)) stack.push({ value: x, path: [...path, k] });
      else found.push({ path: shownPath([...path, k]), message: 'This field name has a broken or hidden character.' });
    }
  }
  return found;
}

/** Refuses a request part holding text PostgreSQL cannot store as sent, or nested too deeply (400 per field). */
export function assertStorable(value: unknown, what = 'request') {
  const details = unstorableInput(value);
  if (!details.length) return;
  const tooDeep = details.some((d) => d.message.startsWith('Nested'));
  throw AppError.validation(
    tooDeep ? `The ${what} is nested too deeply.` : `Some text in the ${what} has a broken or hidden character that cannot be saved. Type it again.`,
    details,
  );
}

/** The JSON body and the query string of every API request, checked once before any route reads them. */
export function storableInput(): RequestHandler {
  return (req, _res, next) => {
    assertStorable(req.body, 'request');
    assertStorable(req.query, 'query');
    next();
  };
}

/**
 * Parses a request part with a shared schema; a failure becomes a 400 with one detail per field.
 * Takes any zod schema, chained (`zod`) or functional (`zod/mini`, as the sign-in input is).
 * Text is checked first, also in parts the JSON parser never saw (multipart fields, CSV, path).
 */
export function parse<T>(schema: core.$ZodType<T>, value: unknown, what = 'request'): T {
  assertStorable(value, what);
  const result = safeParse(schema, value);
  if (!result.success) throw AppError.validation(`Some fields of the ${what} are missing or not valid.`, zodDetails(result.error));
  return result.data;
}
