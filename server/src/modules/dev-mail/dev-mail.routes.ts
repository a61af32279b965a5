// GET /dev/mail — development only: mounted when DEV_MAILBOX=on outside production (npm start without SMTP_URL).
//   signed in:      the mail sent to your own address; a tenant admin also sees the mail their active
//                   tenant sent (invitations, permit notices), never another person's reset links
//   not signed in:  401 and a link to sign in, no mail
import { Router, type ErrorRequestHandler, type Response } from 'express';
import type { AppDeps } from '../../deps';
import { AppError } from '../../errors/app-error';
import { authenticate } from '../../middleware/authenticate';
import { sessionMiddleware } from '../../middleware/session';
import type { CaughtMail, DevMailbox } from './dev-mailbox';

const esc = (s: string) => s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
const linkify = (s: string) => esc(s).replace(/(https?:\/\/[^\s<]+)/g, '<a href="$1">$1</a>');

const page = (body: string) => `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>Development mailbox · Holdpoint</title></head><body>
<h1>Development mailbox</h1>${body}</body></html>`;

function askToSignIn(res: Response) {
  res.status(401).type('html').send(page('<p>Sign in to read the mail sent to you. <a href="/sign-in">Sign in</a>, then open this page again.</p>'));
}

/** Whose mail a signed-in person may read here: their own, and a tenant admin's tenant's. */
export function visibleMail(messages: CaughtMail[], email: string, adminOfTenant: string | null) {
  const own = email.toLowerCase();
  return messages.filter((m) => m.recipients.includes(own) || (adminOfTenant !== null && m.tenantId === adminOfTenant));
}

export function createDevMailRouter(deps: AppDeps, mailbox: DevMailbox) {
  const router = Router();
  router.use(sessionMiddleware(deps), authenticate(deps));
  router.get('/', (req, res) => {
    res.set('Cache-Control', 'no-store');
    if (!req.user) return askToSignIn(res);
    const adminOf = req.actor?.memberships.some((m) => m.role === 'tenant_admin') ? req.actor.tenantId : null;
    const items = visibleMail(mailbox.messages, req.user.email, adminOf)
      .map(
        (m) => `<article><h2>${esc(m.subject)}</h2><p class="meta">To ${esc(m.to)} · ${m.receivedAt.toISOString()}</p><pre>${linkify(m.body)}</pre></article>`,
      )
      .join('\n');
    const whose = adminOf ? 'to you, and by the tenant you administer' : 'to you';
    res.type('html').send(
      page(`<p>Mail sent ${whose} by this demo server (newest first), signed in as ${esc(req.user.email)}. Not available in production.</p>
${items || '<p>No mail for you yet. Invite someone or ask for a password reset.</p>'}`),
    );
  });
  // An ended session reaches here as an error from authenticate(): ask to sign in again, as a page.
  const signInAgain: ErrorRequestHandler = (err, _req, res, next) => (err instanceof AppError && err.code === 'unauthenticated' ? askToSignIn(res) : next(err));
  router.use(signInAgain);
  return router;
}
