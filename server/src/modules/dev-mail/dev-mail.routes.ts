// GET /dev/mail — development only (npm start outside production): the mail the demo has sent.
import { Router } from 'express';
import type { DevMailbox } from './dev-mailbox';

const esc = (s: string) => s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
const linkify = (s: string) => esc(s).replace(/(https?:\/\/[^\s<]+)/g, '<a href="$1">$1</a>');

export function createDevMailRouter(mailbox: DevMailbox) {
  const router = Router();
  router.get('/', (_req, res) => {
    const items = mailbox.messages
      .map(
        (m) => `<article><h2>${esc(m.subject)}</h2><p class="meta">To ${esc(m.to)} · ${m.receivedAt.toISOString()}</p><pre>${linkify(m.body)}</pre></article>`,
      )
      .join('\n');
    res.type('html').send(`<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>Development mailbox · Holdpoint</title></head><body>
<h1>Development mailbox</h1><p>Mail sent by this demo server (newest first). Not available in production.</p>
${items || '<p>No mail yet. Invite someone or ask for a password reset.</p>'}</body></html>`);
  });
  return router;
}
