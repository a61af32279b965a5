import AxeBuilder from '@axe-core/playwright';
import { readFile } from 'node:fs/promises';
import { expect, test, type Locator, type Page } from '@playwright/test';
import { apiAs, ok, transition } from './api-helpers';
import { guideShot, noSideScroll, signedInPage, signInOnPhone } from './helpers';

const AUTHORISER = 'authoriser@bramblecote.example';
const LEAD = 'lead@oxbow-repair.example';

const cards = [
  { key: 'states', title: 'Permits by state over time' },
  { key: 'stages', title: 'Time from request to return to service' },
  { key: 'suspensions', title: 'Suspensions by who stopped the work' },
  { key: 'timeliness', title: 'Gas tests and checks: on time or late' },
  { key: 'isolations', title: 'Isolations in place by age' },
  { key: 'qualifications', title: 'Qualifications running out in the next 90 days' },
];

/** Two permits sent for approval and approved on a stretch of BM-10 no other spec uses, so the stage times have a row to draw. */
test.beforeAll(async () => {
  const lead = await apiAs(LEAD);
  const authoriser = await apiAs(AUTHORISER);
  try {
    const me = await ok<{ memberships: { role: string; organisationId: string }[] }>(lead.get('/api/auth/me'));
    const contractorOrganisationId = me.memberships.find((m) => m.role === 'contractor_lead')!.organisationId;
    const pipes = await ok<{ items: { id: string; code: string }[] }>(lead.get('/api/pipelines?q=BM-10&pageSize=50'));
    const pipelineId = pipes.items.find((p) => p.code === 'BM-10')!.id;
    const now = Date.now();
    for (const [i, at] of [27.6, 28.4].entries()) {
      const created = await ok<{ id: string; version: number }>(
        lead.post('/api/permits', {
          kinds: ['cold_work'],
          title: `Reports: coating survey ${i + 1}`,
          scope: 'Survey the coating beside the road crossing.',
          pipelineId,
          fromPosition: at,
          toPosition: at + 0.2,
          methodStatement: 'Isolate, vent, plug, work, restore.',
          hazards: 'Trapped pressure.',
          ppe: ['Gloves'],
          validFrom: new Date(now - 60_000).toISOString(),
          validTo: new Date(now + 8 * 3600_000).toISOString(),
          contractorOrganisationId,
        }),
        201,
      );
      await ok(
        lead.put(`/api/permits/${created.id}/isolations`, {
          version: created.version,
          steps: [
            { tempLabel: `REP${i}-BV`, tempPosition: at, kind: 'block_valve' },
            { tempLabel: `REP${i}-VT`, tempPosition: at + 0.1, kind: 'vent' },
          ],
          deadEnds: { downstream: 'Test line: capped beyond the work, no product can come from downstream.' },
        }),
      );
      await transition(lead, created.id, 'submit');
      await transition(authoriser, created.id, 'approve');
    }
  } finally {
    await Promise.all([lead.close(), authoriser.close()]);
  }
});

async function noGraveViolations(page: Page, name: string) {
  const { violations } = await new AxeBuilder({ page }).analyze();
  const grave = violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
  console.log(`axe ${name}: ${grave.reduce((n, v) => n + v.nodes.length, 0)} serious/critical, ${violations.length - grave.length} minor/moderate rules`);
  expect(grave.map((v) => `${v.id}: ${v.nodes.map((n) => n.target.join(' ')).join(', ')}`), name).toEqual([]);
}

/** Each card shows its chart (drawn) and its table, or says in words that there is nothing to draw. */
async function expectCards(page: Page) {
  for (const { title } of cards) {
    const card = page.getByRole('region', { name: title, exact: true });
    await expect(card).toBeVisible();
    const empty = card.getByTestId('report-empty');
    if (await empty.count()) {
      await expect(empty).toHaveText(/^No .+\.$/);
      continue;
    }
    await expect(card.getByRole('table', { name: title })).toBeVisible();
    // A chart is drawn when the reader scrolls near it.
    await card.scrollIntoViewIfNeeded();
    await expect(card.getByRole('img', { name: new RegExp(`^Chart of ${title.toLowerCase()}`) })).toBeVisible();
    await expect(card.locator('svg.recharts-surface').first()).toBeVisible();
  }
}

/** A duration as the table shows it ("5.2 h", "3.1 days", "—"), in hours. */
const tableHours = (text: string) => (text === '—' ? null : text.endsWith(' days') ? parseFloat(text) * 24 : parseFloat(text));

async function tableCells(row: Locator) {
  return row.locator('th, td').allInnerTexts();
}

test('issue 21 part 4: when the authoriser opens Reports from the menu, then every figure has its chart and table, a CSV download matches its table, and the period chosen is kept in the address', async ({ browser }) => {
  test.setTimeout(90_000);
  const page = await signedInPage(browser, AUTHORISER);
  const answered = page.waitForResponse((r) => new URL(r.url()).pathname === '/api/reports/overview');
  const started = Date.now();
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Reports', exact: true }).click();
  await expect(page.getByRole('heading', { name: 'Reports', level: 1 })).toBeVisible();
  await expect(page).toHaveURL(/\/reports$/);
  const stages = page.getByRole('region', { name: 'Time from request to return to service', exact: true });
  await expect(page.locator('section[data-testid^="report-"]')).toHaveCount(cards.length);
  await expect(stages.getByRole('table')).toBeVisible();
  const shown = Date.now() - started;
  console.log(`reports page: the figures answered in ${Math.round((await answered).request().timing().responseEnd)} ms, shown ${shown} ms after the menu tap`);
  const asOf = page.getByTestId('report-as-of');
  // The site's time with its zone, never a machine time.
  await expect(asOf).toHaveText(/^The last 90 days, from \d{1,2} \w{3} \d{4}, \d{2}:\d{2} \S+\. As of \d{1,2} \w{3} \d{4}, \d{2}:\d{2} \S+\.$/);
  await expect(page.getByRole('button', { name: '90 days' })).toHaveAttribute('aria-pressed', 'true');
  await expectCards(page);

  // The stage times have the two approvals: the CSV file holds the table's rows, hours with one decimal.
  const row = stages.getByRole('row').filter({ has: page.getByRole('rowheader', { name: 'Sent for approval to approved', exact: true }) });
  const [, permits, median, p90] = await tableCells(row);
  expect(Number(permits.replace(/,/g, ''))).toBeGreaterThanOrEqual(2);
  const [download] = await Promise.all([page.waitForEvent('download'), stages.getByRole('button', { name: 'Download as CSV' }).click()]);
  expect(download.suggestedFilename()).toMatch(/^holdpoint-stage-times-90-days-\d{4}-\d{2}-\d{2}\.csv$/);
  const lines = (await readFile((await download.path())!, 'utf8')).split('\r\n');
  expect(lines[0]).toBe('Stage,Permits,Median (hours),90th percentile (hours)');
  const [stage, csvPermits, csvMedian, csvP90] = lines.find((l) => l.startsWith('Sent for approval to approved,'))!.split(',');
  expect(stage).toBe('Sent for approval to approved');
  expect(Number(csvPermits)).toBe(Number(permits.replace(/,/g, '')));
  for (const [csv, shown] of [
    [csvMedian, median],
    [csvP90, p90],
  ]) {
    expect(csv).toMatch(/^\d+\.\d$/);
    expect(Math.abs(Number(csv) - tableHours(shown)!)).toBeLessThanOrEqual(shown.endsWith('days') ? 1.2 : 0.05);
  }
  await noGraveViolations(page, 'reports');
  await page.evaluate(() => window.scrollTo(0, 0));
  await guideShot(page, 'reports');

  // Another period: the address keeps it, so a shared or reloaded link opens the same figures.
  await page.getByRole('button', { name: '30 days' }).click();
  await expect(page).toHaveURL(/\/reports\?days=30$/);
  await expect(asOf).toHaveText(/^The last 30 days, /);
  await expect(page.getByRole('button', { name: '30 days' })).toHaveAttribute('aria-pressed', 'true');
  await page.reload();
  await expect(page.getByTestId('report-as-of')).toHaveText(/^The last 30 days, /);
  await page.getByRole('button', { name: '365 days' }).click();
  await expect(page).toHaveURL(/\/reports\?days=365$/);
  await expect(page.getByTestId('report-as-of')).toHaveText(/^The last 365 days, /);
  await expectCards(page);
  await page.context().close();
});

test('issue 21 part 4: when the report page is opened on a phone, then its charts and tables fit the screen without sideways scrolling of the page', async ({ browser }) => {
  const context = await browser.newContext({ viewport: { width: 390, height: 844 }, hasTouch: true, isMobile: true });
  const page = await context.newPage();
  await signInOnPhone(page, AUTHORISER);
  await page.goto('/reports');
  await expectCards(page);
  await noSideScroll(page);
  await noGraveViolations(page, 'reports on a phone');
  await context.close();
});

test('issue 21 part 4: when a contractor lead signs in, then the menu has no Reports and /reports says they may not see it', async ({ browser }) => {
  const page = await signedInPage(browser, LEAD);
  await expect(page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Permits', exact: true })).toBeVisible();
  await expect(page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Reports', exact: true })).toHaveCount(0);
  await page.goto('/reports');
  await expect(page.getByRole('alert')).toContainText('You may not see the reports.');
  await expect(page.getByTestId('report-as-of')).toHaveCount(0);
  await page.context().close();
});
