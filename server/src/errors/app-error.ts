import type { ErrorCode, ErrorDetail } from '@shared/errors/error-codes';
import { statusForCode } from '@shared/errors/error-codes';

/** The one error class services throw; the error handler turns it into the JSON error shape. */
export class AppError extends Error {
  readonly status: number;
  constructor(
    readonly code: ErrorCode,
    message: string,
    readonly details: ErrorDetail[] = [],
    readonly extra: Record<string, unknown> = {},
  ) {
    super(message);
    this.status = statusForCode[code];
  }

  static notFound(what = 'record') {
    return new AppError('not_found', `That ${what} was not found.`);
  }
  static forbidden(message = 'Your role does not allow this action.') {
    return new AppError('forbidden', message);
  }
  static conflict(message: string, extra: Record<string, unknown> = {}) {
    return new AppError('conflict', message, [], extra);
  }
  static unprocessable(message: string, details: ErrorDetail[] = []) {
    return new AppError('unprocessable', message, details);
  }
  static validation(message: string, details: ErrorDetail[] = []) {
    return new AppError('validation_failed', message, details);
  }
}
