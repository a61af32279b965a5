import AxeBuilder from '@axe-core/playwright';
import { expect, test, type Browser, type Page } from '@playwright/test';
import pg from 'pg';
import { apiAs, ok, takeLive, transition, type ApiUser } from './api-helpers';
import { DEMO_PASSWORD, guideShot, noSideScroll, scrollUntilDrawn } from './helpers';

/*
 * "My work" (issue 18, "A start page per role") on a phone held in a gloved hand: each person lands on
 * what waits for them after signing in, with counts in the menu; the control room's board keeps only
 * what it has still to acknowledge, and acknowledges from the board itself. The permits are this
 * file's own, on temporary points no other spec uses.
 */

const phone = { viewport: { width: 390, height: 844 }, hasTouch: true, isMobile: true };
const plan = [
  { tempLabel: 'MW-BV-1', tempPosition: 23.0, kind: 'block_valve' },
  { tempLabel: 'MW-VT-1', tempPosition: 23.1, kind: 'vent' },
];
const deadEnds = { downstream: 'Test line: capped beyond the work, no product can come from downstream.' };

interface Made {
  id: string;
  number: string;
}
const made: Record<'toApprove' | 'toAccept' | 'toApply' | 'live', Made> = {} as never;

/** A cold-work draft on the temporary points, written by the lead. */
async function draft(lead: ApiUser, title: string): Promise<Made> {
  const me = await ok<{ memberships: { role: string; organisationId: string }[] }>(lead.get('/api/auth/me'));
  const pipes = await ok<{ items: { id: string; code: string }[] }>(lead.get('/api/pipelines?q=BM-10&pageSize=50'));
  const now = Date.now();
  const created = await ok<{ id: string; number: string; version: number }>(
    lead.post('/api/permits', {
      kinds: ['cold_work'], title, scope: 'Replace a flange gasket.', pipelineId: pipes.items.find((p) => p.code === 'BM-10')!.id, fromPosition: 23.0, toPosition: 23.1,
      methodStatement: 'Close, lock and tag; bleed at the vent; replace the gasket; test; restore.', hazards: 'Trapped pressure.', ppe: ['Gloves'],
      validFrom: new Date(now - 60_000).toISOString(), validTo: new Date(now + 8 * 3600_000).toISOString(),
      contractorOrganisationId: me.memberships.find((m) => m.role === 'contractor_lead')!.organisationId,
    }),
    201,
  );
  await ok(lead.put(`/api/permits/${created.id}/isolations`, { version: created.version, steps: plan, deadEnds }));
  return { id: created.id, number: created.number };
}

async function phoneSignIn(browser: Browser, email: string): Promise<Page> {
  const context = await browser.newContext(phone);
  const page = await context.newPage();
  await page.goto('/sign-in');
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  // Lands on "My work", the start page.
  await expect(page.getByRole('heading', { name: 'My work', level: 1 })).toBeVisible();
  expect(new URL(page.url()).pathname).toBe('/');
  return page;
}

/** A list of "My work" by its title. */
const list = (page: Page, id: string) => page.getByTestId(`my-work-${id}`);

test.describe.configure({ mode: 'serial' });

test.beforeAll(async () => {
  test.setTimeout(120_000);
  const [lead, authoriser, tech] = await Promise.all(['lead@oxbow-repair.example', 'authoriser@bramblecote.example', 'tech@oxbow-repair.example'].map(apiAs));
  try {
    made.toApprove = await draft(lead, 'My work: gasket at MP 23, to approve');
    await transition(lead, made.toApprove.id, 'submit');
    made.toAccept = await draft(lead, 'My work: gasket at MP 23, to accept');
    await transition(lead, made.toAccept.id, 'submit');
    await transition(authoriser, made.toAccept.id, 'approve');
    made.toApply = await draft(lead, 'My work: gasket at MP 23, isolating');
    for (const event of ['submit', 'approve', 'accept']) await transition(event === 'approve' ? authoriser : lead, made.toApply.id, event);
    // The technician puts the valve on: it waits for the second technician's check and the control room's acknowledgement.
    const steps = await ok<{ items: { id: string; label: string }[] }>(tech.get(`/api/permits/${made.toApply.id}/isolations`));
    const valve = steps.items.find((s) => s.label === 'MW-BV-1')!;
    const [lock] = (await ok<{ items: { id: string }[] }>(tech.get('/api/locks?state=in_store&pageSize=1'))).items;
    const [tag] = (await ok<{ items: { id: string }[] }>(tech.get('/api/tags?state=in_store&pageSize=1'))).items;
    await ok(tech.post(`/api/permits/${made.toApply.id}/isolations/${valve.id}/apply`, { lockId: lock.id, tagId: tag.id }));
    // A temporary point cannot be marked as operable from the control room through the plan; the register would say so.
    const db = new pg.Client({ connectionString: process.env.E2E_DATABASE_URL });
    await db.connect();
    try {
      await db.query(`UPDATE isolation_steps SET remotely_operable = true WHERE id = $1`, [valve.id]);
    } finally {
      await db.end();
    }
    made.live = await draft(lead, 'My work: gasket at MP 23, live');
    for (const event of ['submit', 'approve', 'accept']) await transition(event === 'approve' ? authoriser : lead, made.live.id, event);
    await takeLive(made.live.id);
  } finally {
    await Promise.all([lead, authoriser, tech].map((u) => u.close()));
  }
});

test('the authoriser lands on My work and sees the permit waiting for approval, with a count on the menu', async ({ browser }) => {
  const page = await phoneSignIn(browser, 'authoriser@bramblecote.example');
  await expect(list(page, 'to-approve').getByRole('link', { name: new RegExp(made.toApprove.number) })).toBeVisible();
  await expect(page.getByRole('button', { name: 'Menu' }).getByTestId('nav-count')).toHaveText(/^\d+$/);
  // One tap opens the permit.
  await list(page, 'to-approve').getByRole('link', { name: new RegExp(made.toApprove.number) }).tap();
  await expect(page).toHaveURL(new RegExp(`/permits/${made.toApprove.id}$`));
  await page.context().close();
});

test('the contractor lead lands on My work and sees the permit to accept and their live work with its next gas test', async ({ browser }) => {
  const page = await phoneSignIn(browser, 'lead@oxbow-repair.example');
  await expect(list(page, 'to-accept').getByRole('link', { name: new RegExp(made.toAccept.number) })).toBeVisible();
  const live = list(page, 'live-work').getByTestId('my-work-row').filter({ hasText: made.live.number });
  await expect(live.getByRole('link', { name: /Repeat gas test/ })).toHaveAttribute('href', `/permits/${made.live.id}/gas-test`);
  await page.context().close();
});

test('the isolation technician lands on My work and sees the step to apply and the step to verify, each one tap from its task screen', async ({ browser }) => {
  const page = await phoneSignIn(browser, 'tech2@oxbow-repair.example');
  const apply = list(page, 'steps-apply').getByRole('link', { name: /Apply MW-VT-1/ }).filter({ hasText: made.toApply.number });
  await expect(apply).toHaveAttribute('href', new RegExp(`/permits/${made.toApply.id}/steps/[0-9a-f-]+/apply$`));
  await expect(list(page, 'steps-verify').getByRole('link', { name: /Verify MW-BV-1/ }).filter({ hasText: made.toApply.number })).toBeVisible();
  await page.context().close();
});

test('the gas tester lands on My work and sees the live permit’s repeat gas test with its site time, zone and a countdown', async ({ browser }) => {
  const page = await phoneSignIn(browser, 'tech@oxbow-repair.example');
  const row = list(page, 'gas-tests').locator(`[data-testid="my-work-gas"][data-permit="${made.live.number}"]`);
  await expect(row).toContainText(/Due \d{1,2} \w{3}, \d{2}:\d{2} C[SD]T/);
  const countdown = row.getByTestId('gas-countdown');
  const first = await countdown.textContent();
  expect(first).toMatch(/^in \d+ min \d+ s$/);
  await expect(countdown).not.toHaveText(first!, { timeout: 3_000 });
  await noSideScroll(page);
  await guideShot(page, 'my-work-gas-tester', row);
  await page.context().close();
});

// FIXME 2: after the whole suite, other specs' isolations on the line put this row below the first screen of the
// board, where a virtual list draws no row; the acknowledgement's link names the row and the board scrolls to it.
test('the control room lands on My work, sees the isolation and its remote inhibition to acknowledge, and on the board "Not acknowledged only" keeps it and both are acknowledged there', async ({ browser }) => {
  const page = await phoneSignIn(browser, 'control@bramblecote.example');
  const item = list(page, 'to-acknowledge').getByRole('link', { name: /Acknowledge applied MW-BV-1/ }).filter({ hasText: made.toApply.number });
  await expect(item).toBeVisible();
  await expect(list(page, 'to-acknowledge').getByRole('link', { name: /Acknowledge remote inhibition MW-BV-1/ }).filter({ hasText: made.toApply.number })).toBeVisible();
  await item.tap();
  await expect(page).toHaveURL(/\/board\?unacknowledged=true&pipelineId=[0-9a-f-]{36}#step-[0-9a-f-]{36}$/);
  const filter = page.getByRole('checkbox', { name: 'Not acknowledged only' });
  await expect(filter).toBeChecked();
  await noSideScroll(page);
  const rows = page.getByTestId('board-row');
  const valve = page.locator(`[data-testid="board-row"][data-label="MW-BV-1"][data-permit="${made.toApply.number}"]`);
  await expect(valve).toHaveCount(1);
  await guideShot(page, 'board-not-acknowledged', valve);
  // Every row left is waiting for the control room.
  const flags = await rows.evaluateAll((els) => els.map((e) => e.getAttribute('data-awaits-control-room')));
  expect(flags.length).toBeGreaterThan(0);
  expect(new Set(flags)).toEqual(new Set(['true']));
  const dialog = page.getByRole('dialog');
  // Remote inhibition first, on the board itself: the row stays, still waiting for "applied".
  await valve.getByRole('button', { name: `Acknowledge remote inhibition of MW-BV-1 on ${made.toApply.number}` }).tap();
  await dialog.getByRole('button', { name: 'Acknowledge', exact: true }).tap();
  await expect(dialog).toHaveCount(0);
  await expect(valve).toContainText('Remote operation inhibited');
  await expect(valve).toHaveAttribute('data-awaits-control-room', 'true');
  await valve.getByRole('button', { name: `Acknowledge MW-BV-1 on ${made.toApply.number}` }).tap();
  await dialog.getByRole('button', { name: 'Acknowledge', exact: true }).tap();
  await expect(dialog).toHaveCount(0);
  await expect(valve).toHaveCount(0);
  // Off the filter, it is on the board, acknowledged (further down a long board: scrolled to, as a person would).
  await filter.tap();
  await expect(page).not.toHaveURL(/unacknowledged/);
  await scrollUntilDrawn(page, valve);
  await expect(valve).not.toHaveAttribute('data-unacknowledged', 'true');
  await page.context().close();
});

test('when axe-core reads My work on a phone, then it finds no serious or critical violation', async ({ browser }) => {
  for (const email of ['lead@oxbow-repair.example', 'tech@oxbow-repair.example']) {
    const page = await phoneSignIn(browser, email);
    await expect(page.getByTestId('my-work-total')).toBeVisible();
    const { violations, passes } = await new AxeBuilder({ page }).analyze();
    expect(passes.length).toBeGreaterThan(10);
    const grave = violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
    console.log(`axe my-work (${email}): ${grave.length} serious/critical, ${violations.length - grave.length} minor/moderate`);
    expect(grave.map((v) => `${v.id}: ${v.nodes.map((n) => n.target.join(' ')).join(', ')}`)).toEqual([]);
    await page.context().close();
  }
});
