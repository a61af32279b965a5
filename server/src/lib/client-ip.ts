import { isIP } from 'node:net';
import type { Request } from 'express';

/** An IP address as text, or null for anything else: what is stored as a caller's address. */
export function validIp(value: unknown): string | null {
  return typeof value === 'string' && isIP(value) ? value : null;
}

/**
 * The caller's address as Express worked it out from the 'trust proxy' setting (TRUST_PROXY): a
 * trusted proxy may pass on any text in X-Forwarded-For, so only a real IP address comes back.
 */
export function clientIp(req: Request): string | null {
  return validIp(req.ip);
}
