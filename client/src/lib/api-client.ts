import type { ApiErrorBody, ErrorDetail } from '@shared/errors/error-codes';
import { markOffline, markOnline } from './connection';

export class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details: ErrorDetail[] = [],
    readonly body: Record<string, unknown> = {},
  ) {
    super(message);
  }
  /** The message for one form field, when the server named it. */
  fieldMessage(path: string) {
    return this.details.find((d) => d.path === path)?.message;
  }
}

let csrfToken: string | null = null;
let onUnauthenticated: (() => void) | null = null;

export function setUnauthenticatedHandler(fn: () => void) {
  onUnauthenticated = fn;
}

async function fetchCsrf() {
  let res: Response;
  try {
    res = await fetch('/api/auth/csrf', { credentials: 'same-origin' });
  } catch {
    markOffline();
    throw new ApiError(0, 'network', 'No connection to Holdpoint. Check the signal and try again.');
  }
  csrfToken = (await res.json()).csrfToken;
  return csrfToken!;
}

type Method = 'GET' | 'POST' | 'PATCH' | 'PUT' | 'DELETE';

export interface RequestOptions {
  /** Sent as `Idempotency-Key`: the server answers a repeat with the first answer instead of acting twice. */
  idempotencyKey?: string;
}

/** The request reached no server (no signal, or the server out of reach): worth keeping and sending later. */
export const isNetworkError = (err: unknown) => err instanceof ApiError && err.status === 0 && err.code === 'network';

async function request<T>(method: Method, path: string, body?: unknown, retried = false, options: RequestOptions = {}): Promise<T> {
  const headers: Record<string, string> = { accept: 'application/json' };
  if (options.idempotencyKey) headers['idempotency-key'] = options.idempotencyKey;
  const isForm = typeof FormData !== 'undefined' && body instanceof FormData;
  if (body !== undefined && !isForm) headers['content-type'] = 'application/json';
  if (method !== 'GET') headers['x-csrf-token'] = csrfToken ?? (await fetchCsrf());
  let res: Response;
  try {
    res = await fetch(path, { method, headers, credentials: 'same-origin', body: body === undefined ? undefined : isForm ? (body as FormData) : JSON.stringify(body) });
  } catch {
    markOffline();
    throw new ApiError(0, 'network', 'No connection to Holdpoint. Check the signal and try again.');
  }
  markOnline();
  if (res.status === 204) return undefined as T;
  const text = await res.text();
  const data = text ? safeJson(text) : null;
  if (res.ok) return data as T;
  const err = (data as ApiErrorBody | null)?.error;
  if (err?.code === 'csrf_failed' && !retried) {
    await fetchCsrf();
    return request<T>(method, path, body, true, options);
  }
  if (res.status === 401 && onUnauthenticated && !path.startsWith('/api/auth/')) onUnauthenticated();
  const { code, message, details, ...rest } = (err ?? {}) as ApiErrorBody['error'] & Record<string, unknown>;
  throw new ApiError(res.status, code ?? 'unknown', message ?? `The server answered ${res.status}.`, details ?? [], rest);
}

function safeJson(text: string) {
  try {
    return JSON.parse(text);
  } catch {
    return null;
  }
}

export const api = {
  get: <T>(path: string) => request<T>('GET', path),
  post: <T>(path: string, body?: unknown, options?: RequestOptions) => request<T>('POST', path, body ?? {}, false, options),
  patch: <T>(path: string, body?: unknown) => request<T>('PATCH', path, body ?? {}),
  put: <T>(path: string, body?: unknown) => request<T>('PUT', path, body ?? {}),
  delete: <T>(path: string) => request<T>('DELETE', path),
  resetCsrf: () => {
    csrfToken = null;
  },
};

/** Builds a query string from defined values only. */
export function qs(params: Record<string, string | number | boolean | undefined | null>) {
  const p = new URLSearchParams();
  for (const [k, v] of Object.entries(params)) if (v !== undefined && v !== null && v !== '') p.set(k, String(v));
  const s = p.toString();
  return s ? `?${s}` : '';
}
