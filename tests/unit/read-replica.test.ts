// Issue 20 part 2: read-your-writes across processes. After a state-changing request the browser carries a
// short-lived signed cookie; while it is valid that browser's lag-tolerant reads go to the primary.
import { describe, expect, it } from 'vitest';
import type { Request, Response } from 'express';
import { FRESH_COOKIE, READ_OWN_WRITES_MS, readYourWrites, wroteRecently } from '../../server/src/lib/read-replica';

const SECRET = 'test-session-secret-0123456789';

function cookieAfter(method: string): string | null {
  let set: string | null = null;
  const res = { cookie: (name: string, value: string) => (set = `${name}=${value}`) } as unknown as Response;
  readYourWrites(SECRET)({ method, secure: false } as Request, res, () => undefined);
  return set;
}
const request = (cookie: string) => ({ headers: { cookie } }) as Request;

describe('issue 20 part 2: read-your-writes cookie', () => {
  it('when a browser sends a state-changing request, then its reads go to the primary for a few seconds, and a GET sets nothing', () => {
    const cookie = cookieAfter('POST');
    expect(cookie).toMatch(new RegExp(`^${FRESH_COOKIE.replace('.', '\\.')}=\\d+\\.`));
    expect(wroteRecently(request(cookie!), SECRET)).toBe(true);
    expect(wroteRecently(request(cookie!), SECRET, Date.now() + READ_OWN_WRITES_MS + 1)).toBe(false);
    expect(cookieAfter('GET')).toBeNull();
  });

  it('when the cookie is made up or signed with another secret, then it counts for nothing', () => {
    const until = Date.now() + 60_000;
    expect(wroteRecently(request(`${FRESH_COOKIE}=${until}.forged-signature-000000`), SECRET)).toBe(false);
    expect(wroteRecently(request(cookieAfter('POST')!), 'another-secret-0123456789')).toBe(false);
    expect(wroteRecently(request(`${FRESH_COOKIE}=not-a-time`), SECRET)).toBe(false);
    expect(wroteRecently(request(''), SECRET)).toBe(false);
  });
});
