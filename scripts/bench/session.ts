// Signing in over HTTP the way the browser does: the CSRF cookie and token first, then the session cookie.
export const DEMO_PASSWORD = 'holdpoint-demo';

export interface BenchSession {
  email: string;
  /** Cookie header carrying the session and the CSRF cookie. */
  cookie: string;
  csrf: string;
}

const cookiePairs = (res: Response) => res.headers.getSetCookie().map((c) => c.split(';')[0]);

function mergeCookies(...lists: string[][]) {
  const jar = new Map<string, string>();
  for (const list of lists) for (const pair of list) jar.set(pair.split('=')[0], pair);
  return [...jar.values()].join('; ');
}

export async function signIn(base: string, email: string, password = DEMO_PASSWORD): Promise<BenchSession> {
  const csrfRes = await fetch(`${base}/api/auth/csrf`);
  const { csrfToken } = (await csrfRes.json()) as { csrfToken: string };
  const first = cookiePairs(csrfRes);
  const res = await fetch(`${base}/api/auth/sign-in`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-csrf-token': csrfToken, cookie: mergeCookies(first) },
    body: JSON.stringify({ email, password }),
  });
  if (res.status !== 200) throw new Error(`sign-in as ${email} failed: ${res.status} ${await res.text()}`);
  return { email, cookie: mergeCookies(first, cookiePairs(res)), csrf: csrfToken };
}

/** Headers for a JSON request in the session (the CSRF header is ignored on GET). */
export const sessionHeaders = (s: BenchSession, extra: Record<string, string> = {}) => ({
  cookie: s.cookie,
  'x-csrf-token': s.csrf,
  'content-type': 'application/json',
  ...extra,
});

export async function call(base: string, s: BenchSession, method: string, path: string, body?: unknown) {
  const res = await fetch(`${base}${path}`, { method, headers: sessionHeaders(s), body: body === undefined ? undefined : JSON.stringify(body) });
  const text = await res.text();
  return { status: res.status, body: text ? (JSON.parse(text) as unknown) : null };
}
