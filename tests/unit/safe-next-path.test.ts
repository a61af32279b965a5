import { describe, expect, it } from 'vitest';
import { safeNextPath } from '@client/features/auth/lib/safe-next-path';

describe('finding 15: where the sign-in page sends someone next', () => {
  it.each([
    ['/permits/42', '/permits/42'],
    ['/permits?state=live&page=2', '/permits?state=live&page=2'],
    ['/board#CR-BV-149', '/board#CR-BV-149'],
    ['/admin/../permits', '/permits'],
  ])('when next is the app path %s, then it leads to %s', (next, path) => {
    expect(safeNextPath(next)).toBe(path);
  });

  it.each([
    '//evil.example',
    '//evil.example/permits',
    '/\\evil.example',
    '/\t/evil.example',
    '/\n/evil.example',
    '\\\\evil.example',
    'https://evil.example/',
    'javascript:alert(1)',
    'permits',
    '',
    '/sign-in',
    '/sign-in?next=//evil.example',
  ])('when next is %j, then it leads to the home page', (next) => {
    expect(safeNextPath(next)).toBe('/');
  });

  it('when there is no next, then it leads to the home page', () => {
    expect(safeNextPath(null)).toBe('/');
    expect(safeNextPath(undefined)).toBe('/');
  });
});
