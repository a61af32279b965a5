// Any origin will do as long as no real site has it: it only tells whether a path stays on this one.
const HERE = 'https://holdpoint.invalid';

/**
 * Where to go after signing in (the ?next= of the sign-in page): a path of this app, or the home page.
 * Anything that would leave the site ("//host", "/\host", "https://…", "javascript:…", control
 * characters the browser strips) or lead back to the sign-in page gives "/".
 */
export function safeNextPath(next: string | null | undefined): string {
  if (typeof next !== 'string' || !next.startsWith('/') || next.startsWith('//') || next.startsWith('/\\')) return '/';
  let url: URL;
  try {
    url = new URL(next, HERE);
  } catch {
    return '/';
  }
  if (url.origin !== HERE || url.pathname === '/sign-in') return '/';
  return `${url.pathname}${url.search}${url.hash}`;
}
