import type { ApiErrorBody, ErrorDetail } from '@shared/errors/error-codes';

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
  const res = await fetch('/api/auth/csrf', { credentials: 'same-origin' });
  csrfToken = (await res.json()).csrfToken;
  return csrfToken!;
}

type Method = 'GET' | 'POST' | 'PATCH' | 'PUT' | 'DELETE';

async function request<T>(method: Method, path: string, body?: unknown, retried = false): Promise<T> {
  const headers: Record<string, string> = { accept: 'application/json' };
  const isForm = typeof FormData !== 'undefined' && body instanceof FormData;
  if (body !== undefined && !isForm) headers['content-type'] = 'application/json';
  if (method !== 'GET') headers['x-csrf-token'] = csrfToken ?? (await fetchCsrf());
  let res: Response;
  try {
    res = await fetch(path, { method, headers, credentials: 'same-origin', body: body === undefined ? undefined : isForm ? (body as FormData) : JSON.stringify(body) });
  } catch {
    throw new ApiError(0, 'network', 'No connection to Holdpoint. Check the signal and try again.');
  }
  if (res.status === 204) return undefined as T;
  const text = await res.text();
  const data = text ? safeJson(text) : null;
  if (res.ok) return data as T;
  const err = (data as ApiErrorBody | null)?.error;
  if (err?.code === 'csrf_failed' && !retried) {
    await fetchCsrf();
    return request<T>(method, path, body, true);
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
  post: <T>(path: string, body?: unknown) => request<T>('POST', path, body ?? {}),
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
