// Time from navigation to the live board's first rows, in Debian's Chromium, on the scale data.
import { chromium } from '@playwright/test';
import { DEMO_PASSWORD } from './session';

export interface BoardPaint {
  /** First visit after sign-in (the board's code not yet loaded) and a second visit, in ms. */
  coldMs: number;
  warmMs: number;
  /** Rows in the DOM once the first ones show, and the total the page reports. */
  rowsInDom: number;
  total: number | null;
}

export async function measureBoardPaint(base: string, email: string): Promise<BoardPaint | { skipped: string }> {
  const browser = await chromium.launch({
    executablePath: '/usr/bin/chromium',
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-dev-shm-usage', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run'],
  });
  try {
    const page = await (await browser.newContext({ baseURL: base, viewport: { width: 1280, height: 800 } })).newPage();
    await page.goto('/sign-in');
    await page.getByLabel('E-mail').fill(email);
    await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByTestId('who').waitFor({ timeout: 30_000 });
    const visit = async () => {
      const started = Date.now();
      await page.goto('/board', { waitUntil: 'commit' });
      const row = page.getByTestId('board-row').first();
      const notFound = page.getByRole('heading', { name: 'Not found' });
      await Promise.race([row.waitFor({ timeout: 120_000 }), notFound.waitFor({ timeout: 120_000 })]);
      if (!(await row.isVisible())) return null;
      return Date.now() - started;
    };
    const coldMs = await visit();
    if (coldMs === null) return { skipped: 'no board page at /board' };
    const rowsInDom = await page.getByTestId('board-row').count();
    const summary = await page.getByTestId('board-summary').textContent().catch(() => null);
    const total = summary ? Number(/([\d,]+) isolation/.exec(summary)?.[1]?.replace(/,/g, '') ?? NaN) : NaN;
    await page.goto('/');
    const warmMs = (await visit()) ?? NaN;
    return { coldMs, warmMs, rowsInDom, total: Number.isFinite(total) ? total : null };
  } finally {
    await browser.close();
  }
}

export interface SlowLinkVisits {
  /** First visit: from navigation start to the start page showing the person's work, in ms. */
  firstMs: number;
  /** Repeat visit: from navigation start to the page's heading (the app drawn from the worker), and to the work, in ms. */
  repeatMs: number;
  repeatWorkMs: number;
  /** The first visit's heading time, requests and bytes on the wire. */
  firstHeadingMs: number;
  requests: number;
  bytes: number;
  /** Whether the repeat visit's page came from the service worker. */
  repeatFromWorker: boolean;
}

declare global {
  interface Window {
    benchHeadingAt?: number;
    benchWorkAt?: number;
  }
}

/**
 * Issue 18's numbers: a signed-in phone (390×844, touch) opens the start page ("My work") over 400 kbit/s with
 * 400 ms latency (Chromium throttled through CDP), then again from the service worker. Timed in the page from
 * navigation start: the first visit to the person's work in the DOM (their lists or "nothing is waiting", not the
 * loading line), the repeat visit to the page's heading (its answers still cross the slow link).
 */
export async function measureSlowLinkVisits(base: string, email: string): Promise<SlowLinkVisits> {
  const browser = await chromium.launch({
    executablePath: '/usr/bin/chromium',
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-dev-shm-usage', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run'],
  });
  try {
    const context = await browser.newContext({ baseURL: base, viewport: { width: 390, height: 844 }, hasTouch: true, isMobile: true });
    await context.addInitScript(() => {
      const observer = new MutationObserver(() => {
        if (window.benchHeadingAt === undefined && document.querySelector('main h1')) window.benchHeadingAt = performance.now();
        if (window.benchWorkAt === undefined && document.querySelector('main [data-testid="my-work-total"]')) window.benchWorkAt = performance.now();
        if (window.benchHeadingAt !== undefined && window.benchWorkAt !== undefined) observer.disconnect();
      });
      observer.observe(document, { childList: true, subtree: true });
    });
    // Signed in before the link is throttled, as a phone that signed in earlier.
    const { csrfToken } = (await (await context.request.get('/api/auth/csrf')).json()) as { csrfToken: string };
    const signedIn = await context.request.post('/api/auth/sign-in', { headers: { 'x-csrf-token': csrfToken }, data: { email, password: DEMO_PASSWORD } });
    if (signedIn.status() !== 200) throw new Error(`sign-in as ${email} failed: ${signedIn.status()}`);
    const page = await context.newPage();
    const cdp = await context.newCDPSession(page);
    await cdp.send('Network.enable');
    await cdp.send('Network.emulateNetworkConditions', { offline: false, latency: 400, downloadThroughput: 400_000 / 8, uploadThroughput: 400_000 / 8 });
    const sizes: Promise<number>[] = [];
    page.on('requestfinished', (req) => sizes.push(req.sizes().then((s) => s.responseBodySize, () => 0)));
    const workShown = async () => {
      await page.getByTestId('my-work-total').waitFor({ timeout: 60_000 });
      return page.evaluate(() => ({ heading: window.benchHeadingAt ?? NaN, work: window.benchWorkAt ?? NaN }));
    };

    await page.goto('/', { waitUntil: 'commit' });
    const first = await workShown();
    page.removeAllListeners('requestfinished');
    const bytes = (await Promise.all(sizes)).reduce((a, b) => a + b, 0);
    // The repeat visit is only a service-worker visit once the worker has activated (after its precache).
    await page.evaluate(async () => {
      const worker = (await navigator.serviceWorker.ready).active!;
      if (worker.state !== 'activated') await new Promise((resolve) => worker.addEventListener('statechange', () => worker.state === 'activated' && resolve(undefined)));
    });
    const repeat = await page.goto('/', { waitUntil: 'commit' });
    const again = await workShown();
    return {
      firstMs: Math.round(first.work), repeatMs: Math.round(again.heading), repeatWorkMs: Math.round(again.work), firstHeadingMs: Math.round(first.heading),
      requests: sizes.length, bytes, repeatFromWorker: repeat?.fromServiceWorker() ?? false,
    };
  } finally {
    await browser.close();
  }
}
