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
