import AxeBuilder from '@axe-core/playwright';
import { expect, test, type Page } from '@playwright/test';
import { apiAs, ok, transition } from './api-helpers';
import { noSideScroll, signedInPage, signInOnPhone } from './helpers';

const AUTHORISER = 'authoriser@bramblecote.example';

let first: { id: string; number: string };
let second: { id: string; number: string };

/** Two permits sent for approval on overlapping stretches of BM-10 (MP 26.0–26.4 and 26.2–26.6), both open now. */
test.beforeAll(async () => {
  const lead = await apiAs('lead@oxbow-repair.example');
  try {
    const me = await ok<{ memberships: { role: string; organisationId: string }[] }>(lead.get('/api/auth/me'));
    const contractorOrganisationId = me.memberships.find((m) => m.role === 'contractor_lead')!.organisationId;
    const pipes = await ok<{ items: { id: string; code: string }[] }>(lead.get('/api/pipelines?q=BM-10&pageSize=50'));
    const pipelineId = pipes.items.find((p) => p.code === 'BM-10')!.id;
    const now = Date.now();
    const make = async (title: string, fromPosition: number, toPosition: number, label: string) => {
      const created = await ok<{ id: string; number: string; version: number }>(
        lead.post('/api/permits', {
          kinds: ['cold_work'],
          title,
          scope: 'Recoat the line after the sleeve.',
          pipelineId,
          fromPosition,
          toPosition,
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
            { tempLabel: `${label}-BV`, tempPosition: fromPosition, kind: 'block_valve' },
            { tempLabel: `${label}-VT`, tempPosition: fromPosition + 0.1, kind: 'vent' },
            { tempLabel: `${label}-PL`, tempPosition: fromPosition + 0.2, kind: 'plug', plugDiameterIn: 10 },
          ],
          deadEnds: { downstream: 'Test line: capped beyond the work, no product can come from downstream.' },
        }),
      );
      await transition(lead, created.id, 'submit');
      return { id: created.id, number: created.number };
    };
    first = await make('Plan view: sleeve at MP 26', 26.0, 26.4, 'PLANA');
    second = await make('Plan view: recoat at MP 26', 26.2, 26.6, 'PLANB');
  } finally {
    await lead.close();
  }
});

async function noGraveViolations(page: Page, name: string) {
  const { violations } = await new AxeBuilder({ page }).analyze();
  const grave = violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
  console.log(`axe ${name}: ${grave.reduce((n, v) => n + v.nodes.length, 0)} serious/critical`);
  expect(grave.map((v) => `${v.id}: ${v.nodes.map((n) => n.target.join(' ')).join(', ')}`), name).toEqual([]);
}

test('issue 21 part 3: when two permits overlap on the line, then the week ahead marks both in words and stripes, and the day view lists them for printing', async ({ browser }) => {
  test.setTimeout(90_000);
  const page = await signedInPage(browser, AUTHORISER);
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Week ahead', exact: true }).click();
  await expect(page.getByRole('heading', { name: 'The week ahead', level: 1 })).toBeVisible();
  const row = page.getByTestId('plan-permit').filter({ hasText: first.number });
  await expect(row).toHaveAttribute('data-overlap', 'true');
  await expect(row).toHaveAttribute('data-awaiting', 'true');
  await expect(row.getByText(/Overlaps \d+ other permit/)).toBeVisible();
  await expect(row.getByText('Waiting for approval')).toBeVisible();
  await expect(page.getByTestId('plan-overlaps').getByText(new RegExp(`${first.number}.*${second.number}|${second.number}.*${first.number}`))).toBeVisible();
  await noGraveViolations(page, 'week ahead');

  // The morning meeting: today's day view names the overlap and lists both permits.
  await page.getByRole('button', { name: "Today's meeting" }).click();
  const day = page.getByTestId('plan-day');
  await expect(day.getByText(/Overlapping work:/).first()).toBeVisible();
  await expect(day.getByRole('link', { name: first.number })).toBeVisible();
  await expect(page.getByRole('button', { name: 'Print the day' })).toBeVisible();
  await page.emulateMedia({ media: 'print' });
  await expect(page.getByTestId('plan-timeline')).toBeHidden();
  await expect(day).toBeVisible();
  await page.emulateMedia({ media: 'screen' });
  await page.close();
});

test('issue 21 part 3: when the week ahead is opened on a phone, then it fits the screen and scrolls the timeline inside its box', async ({ browser }) => {
  const context = await browser.newContext({ viewport: { width: 390, height: 844 }, hasTouch: true, isMobile: true });
  const page = await context.newPage();
  await signInOnPhone(page, AUTHORISER);
  await page.goto('/plan');
  await expect(page.getByTestId('plan-permit').filter({ hasText: second.number })).toHaveAttribute('data-overlap', 'true');
  await noSideScroll(page);
  await context.close();
});
