/** The one error shape every API error uses: `{ error: { code, message, details } }`. */
export const errorCodes = [
  'validation_failed',
  'unauthenticated',
  'forbidden',
  'not_found',
  'conflict',
  'payload_too_large',
  'unsupported_media_type',
  'unprocessable',
  'rate_limited',
  'csrf_failed',
  'service_unavailable',
  'internal',
] as const;

export type ErrorCode = (typeof errorCodes)[number];

export interface ErrorDetail {
  path: string;
  message: string;
}

export interface ApiErrorBody {
  error: { code: ErrorCode; message: string; details: ErrorDetail[] };
}

export const statusForCode: Record<ErrorCode, number> = {
  validation_failed: 400,
  unauthenticated: 401,
  forbidden: 403,
  not_found: 404,
  conflict: 409,
  payload_too_large: 413,
  unsupported_media_type: 415,
  unprocessable: 422,
  rate_limited: 429,
  csrf_failed: 403,
  service_unavailable: 503,
  internal: 500,
};
